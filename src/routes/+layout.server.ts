import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { assemblerCalendar } from '$lib/server/services/calendar';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async (event) => {
	const user = allowAnonymous(event);
	return {
		user: user && {
			id: user.userId,
			label: user.label,
			role: user.role,
			dealerScoped: user.dealerScoped
		},
		calendar: await assemblerCalendar(await getDb())
	};
};
