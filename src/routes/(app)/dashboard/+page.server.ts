import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { dashboardFigures } from '$lib/server/services/dashboard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'viewDashboard');
	return { figures: await dashboardFigures(await getDb()) };
};
