import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { inviteSchema } from '$lib/schemas/auth';
import { parseForm } from '$lib/server/validation';
import { inviteUser, listOrganisations, listUsers } from '$lib/server/services/users';
import { baseUrl } from '$lib/server/base-url';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageUsers');
	const db = await getDb();
	return { users: await listUsers(db), organisations: await listOrganisations(db) };
};

export const actions: Actions = {
	invite: async (event) => {
		const actor = requireCan(event, 'manageUsers');
		const parsed = await parseForm(inviteSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await inviteUser(await getDb(), actor, parsed.data, baseUrl(event.url));
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		return { invited: parsed.data.email };
	}
};
