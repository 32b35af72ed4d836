import { readerOf, type Db } from '$lib/server/db';

/**
 * Whether this app server can answer: its database opened and migrated (getDb does both
 * before the first request), and a trivial statement goes through on the connection the
 * request path reads on. For load balancers, process supervisors and the benchmarks' start-up
 * wait.
 */
export async function checkHealth(db: Db): Promise<{ ok: true }> {
	await readerOf(db).execute('SELECT 1');
	return { ok: true };
}
