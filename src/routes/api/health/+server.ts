import { json } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { checkHealth } from '$lib/server/services/health';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** 200 `{ ok: true }` once the server can serve (database open and migrated); never cached. */
export const GET: RequestHandler = async (event) => {
	allowAnonymous(event);
	try {
		return json(await checkHealth(await getDb()), { headers: { 'cache-control': 'no-store' } });
	} catch (e) {
		return jsonFrom(e);
	}
};
