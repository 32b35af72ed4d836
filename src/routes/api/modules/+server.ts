import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listModulesJson } from '$lib/server/services/fleet';
import { fleetQueryProblem, parseFleetQuery } from '$lib/schemas/fleet';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** One page of the fleet table: `?page&pageSize&sort&dir` and filters; a dealer's staff see their own units only. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewFleet');
	const query = parseFleetQuery(event.url.searchParams);
	if (!query.success) return json(fleetQueryProblem(query.error), { status: 400 });
	try {
		// The page comes from SQLite as JSON text already: passed on as it is, not parsed and re-encoded.
		return new Response(await listModulesJson(await getDb(), actor, query.data), {
			headers: { 'content-type': 'application/json' }
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
