import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth';
import { allowAnonymous } from '$lib/server/auth/guards';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	allowAnonymous(event);
	redirect(303, '/');
};

export const actions: Actions = {
	default: async (event) => {
		allowAnonymous(event);
		await signOut(event);
	}
};
