import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { exportModules } from '$lib/server/services/fleet';
import { fleetQueryProblem, parseFleetQuery } from '$lib/schemas/fleet';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';
import { businessDay } from '$lib/server/services/calendar';

/** Every module of the view (same filters, scope and order as the table) as a CSV download. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewFleet');
	const query = parseFleetQuery(event.url.searchParams);
	if (!query.success) return json(fleetQueryProblem(query.error), { status: 400 });
	try {
		const db = await getDb();
		const csv = await exportModules(db, actor, query.data);
		const today = await businessDay(db, new Date());
		return new Response(csv, {
			headers: {
				'content-type': 'text/csv; charset=utf-8',
				'content-disposition': `attachment; filename="packledger-fleet-${today}.csv"`,
				'cache-control': 'private, no-store'
			}
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
