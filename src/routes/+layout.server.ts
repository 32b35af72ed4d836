import { allowAnonymous } from '$lib/server/auth/guards';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = (event) => {
	const user = allowAnonymous(event);
	return {
		user: user && {
			id: user.userId,
			label: user.label,
			role: user.role,
			dealerScoped: user.dealerScoped
		}
	};
};
