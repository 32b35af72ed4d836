import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { eventLoopDelay } from '$lib/server/diagnostics';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * The event loop's longest delay (and p99, mean) since the last reset, for benchmarks:
 * `{ maxMs, p99Ms, meanMs, samples, sinceMs }`; `?reset=1` starts a new measurement. Answers
 * 404 unless the server runs with PACKLEDGER_DIAGNOSTICS=1. Admins only.
 */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'viewDiagnostics');
	try {
		return json(eventLoopDelay(event.url.searchParams.get('reset') === '1'), {
			headers: { 'cache-control': 'no-store' }
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
