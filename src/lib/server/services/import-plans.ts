import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import type { PlanChunk } from './import-analysis';
import { importWriter } from './import-writer';

/** A plan no import row ever claimed (a preview that failed or a server that stopped) is dropped after this long. */
const ORPHAN_MS = 60 * 60 * 1000;

/**
 * Writes a preview's plan slices as they are made, each in its own short write (queued behind
 * this process's other writers, never holding the preview's loop): the reading of the file goes
 * on while a commit elsewhere holds the write lock. `done` waits for every write and rethrows
 * the first failure; `discard` removes what was written (a preview that failed stores nothing).
 */
export function planWriter(db: Db, planKey: string, now: Date) {
	let queue: Promise<void> = Promise.resolve();
	let failure: unknown = null;
	return {
		write(chunk: PlanChunk) {
			queue = queue.then(() =>
				failure
					? undefined
					: withWriteLock(db, async () =>
							(await importWriter(db)).execute({
								sql: 'INSERT INTO import_plan_chunks (plan_key, seq, rows, states, created_at) VALUES (?, ?, ?, ?, ?)',
								args: [planKey, chunk.seq, chunk.rows, chunk.states, now.getTime()]
							})
						).then(
							() => undefined,
							(e) => void (failure = e)
						)
			);
		},
		async done() {
			await queue;
			if (failure) throw failure;
		},
		async discard() {
			await queue;
			await withWriteLock(db, async () =>
				(await importWriter(db)).execute({
					sql: 'DELETE FROM import_plan_chunks WHERE plan_key = ? AND import_id IS NULL',
					args: [planKey]
				})
			);
		}
	};
}

/** The statement that gives a preview's plan slices to its import (run in the preview's last batch). */
export const claimPlanStatement = (planKey: string, sha256: string) => ({
	sql: `UPDATE import_plan_chunks SET import_id = (SELECT id FROM imports WHERE kind = 'factory_tests' AND sha256 = ?)
	      WHERE plan_key = ?`,
	args: [sha256, planKey]
});

/** Drops plan slices that no import claimed within the hour. */
export function dropOrphanPlans(db: Db, now: Date) {
	return withWriteLock(db, async () =>
		(await importWriter(db)).execute({
			sql: 'DELETE FROM import_plan_chunks WHERE import_id IS NULL AND created_at < ?',
			args: [now.getTime() - ORPHAN_MS]
		})
	);
}

/** The ids of an import's plan slices, in file order. */
export async function planChunkIds(db: Db, importId: number): Promise<number[]> {
	const r = await db.$client.execute({
		sql: 'SELECT id FROM import_plan_chunks WHERE import_id = ? ORDER BY seq',
		args: [importId]
	});
	return r.rows.map((row) => Number(row.id));
}
