import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { assemblerCalendar } from '$lib/server/services/calendar';
import { menuFor, type RoleName } from '$lib/roles';
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
		menu: user ? menuFor(user.role as RoleName) : null,
		calendar: await assemblerCalendar(await getDb())
	};
};
