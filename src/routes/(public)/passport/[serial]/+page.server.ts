import { error } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getPassport } from '$lib/server/services/passports';
import { accessParamSchema } from '$lib/schemas/passport';
import { baseUrl } from '$lib/server/base-url';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';

/** The battery passport for people: the tier the server decides, as readable sections. */
export const load: PageServerLoad = async (event) => {
	const user = allowAnonymous(event);
	const access = accessParamSchema.safeParse(event.url.searchParams.get('access'));
	if (!access.success) error(400, access.error.issues[0].message);
	try {
		const passport = await getPassport(
			await getDb(),
			{ actor: user, access: access.data },
			event.params.serial,
			baseUrl(event.url)
		);
		event.setHeaders({ 'referrer-policy': 'no-referrer', 'cache-control': 'private, no-store' });
		return { passport, access: access.data, signedIn: !!user };
	} catch (e) {
		errorFrom(e);
	}
};
