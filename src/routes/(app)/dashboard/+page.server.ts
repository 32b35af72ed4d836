import { requireRole } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { dashboardFigures } from '$lib/server/services/dashboard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin', 'workshop', 'warranty');
	return { figures: await dashboardFigures(await getDb()) };
};
