import type { Db } from '$lib/server/db';

/**
 * Whether this app server can answer: its database opened and migrated (getDb does both
 * before the first request), and a trivial statement goes through. For load balancers,
 * process supervisors and the benchmarks' start-up wait.
 */
export async function checkHealth(db: Db): Promise<{ ok: true }> {
	await db.$client.execute('SELECT 1');
	return { ok: true };
}
