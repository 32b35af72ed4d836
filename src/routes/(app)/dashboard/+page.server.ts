import { requireCan } from '$lib/server/auth/guards';
import { can } from '$lib/policy';
import { getDb } from '$lib/server/db';
import { claimFigures, dashboardFigures } from '$lib/server/services/dashboard';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewDashboard');
	const db = await getDb();
	const [figures, claims] = await Promise.all([
		dashboardFigures(db),
		can(actor.role, 'viewClaims') ? claimFigures(db) : null
	]);
	return { figures, claims };
};
