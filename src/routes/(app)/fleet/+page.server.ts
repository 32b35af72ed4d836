import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { fleetFilterOptions, getColumnPrefs } from '$lib/server/services/fleet';
import { DEFAULT_FLEET_COLUMNS } from '$lib/schemas/fleet';
import type { PageServerLoad } from './$types';

/** Filter choices and saved columns only: the rows come from /api/modules through +page.ts as the URL changes. */
export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewFleet');
	const db = await getDb();
	const options = await fleetFilterOptions(db, actor);
	const saved = actor.userId === null ? null : await getColumnPrefs(db, actor.userId);
	// A dealer's staff see only their own organisation, so its column starts hidden for them.
	const defaults = options.dealers
		? DEFAULT_FLEET_COLUMNS
		: DEFAULT_FLEET_COLUMNS.filter((c) => c !== 'dealer');
	return { ...options, columns: saved ?? defaults };
};
