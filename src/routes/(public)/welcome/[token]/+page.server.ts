import { allowAnonymous } from '$lib/server/auth/guards';
import { loadToken, spendToken } from '$lib/server/auth/token-route';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	allowAnonymous(event);
	return loadToken(event, 'invite');
};

export const actions: Actions = {
	default: (event) => {
		allowAnonymous(event);
		return spendToken(event, 'invite');
	}
};
