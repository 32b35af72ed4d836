import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { endSessions } from '$lib/server/services/users';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	allowAnonymous(event);
	redirect(303, '/');
};

export const actions: Actions = {
	default: async (event) => {
		const actor = allowAnonymous(event);
		// Clearing the cookie is not enough: a copy of the token must stop working too.
		if (actor?.userId) await endSessions(await getDb(), actor.userId);
		await signOut(event);
	}
};
