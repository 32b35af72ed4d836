import { fail } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { forgotSchema } from '$lib/schemas/auth';
import { parseForm } from '$lib/server/validation';
import { askForPasswordReset } from '$lib/server/services/account-links';
import { baseUrl } from '$lib/server/base-url';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	allowAnonymous(event);
};

export const actions: Actions = {
	default: async (event) => {
		allowAnonymous(event);
		const parsed = await parseForm(forgotSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		await askForPasswordReset(
			await getDb(),
			parsed.data.email,
			event.getClientAddress(),
			baseUrl(event.url)
		);
		return { sent: true, email: parsed.data.email };
	}
};
