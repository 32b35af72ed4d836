import type { InStatement } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import type { PlanChunk } from './import-analysis';
import { importWriter } from './import-writer';

/** A plan no import row ever claimed (a preview that failed or a server that stopped) is dropped after this long. */
const ORPHAN_MS = 60 * 60 * 1000;

/** Plan slices written together (about 2 MB): a small file's plan goes with the preview's last batch. */
const SLICES_PER_WRITE = 8;

const insertSlice = (planKey: string, chunk: PlanChunk, now: Date): InStatement => ({
	// The rows as UTF-8 bytes (moved to the writer's thread, not copied), stored as text.
	sql: 'INSERT INTO import_plan_chunks (plan_key, seq, rows, states, created_at) VALUES (?, ?, CAST(? AS TEXT), ?, ?)',
	args: [planKey, chunk.seq, chunk.rows, chunk.states, now.getTime()]
});

/**
 * Writes a preview's plan slices as they are made, a few at a time, each write queued behind
 * this process's other writers without holding the preview's loop: the reading of the file
 * goes on while a commit elsewhere holds the write lock. `rest` hands over the slices not
 * written yet (for the preview's last batch) after waiting for every write and rethrowing the
 * first failure; `discard` removes what was written (a preview that failed stores nothing).
 * `write` answers a promise to wait for when the writes have fallen behind (more than one
 * write in flight): the reader then waits, so the slices waiting in memory stay bounded
 * (about 2 × SLICES_PER_WRITE) however slow the database is.
 */
export function planWriter(db: Db, planKey: string, now: Date) {
	let queue: Promise<void> = Promise.resolve();
	let failure: unknown = null;
	let pending: InStatement[] = [];
	let inFlight = 0;
	return {
		write(chunk: PlanChunk): Promise<void> | undefined {
			pending.push(insertSlice(planKey, chunk, now));
			if (pending.length < SLICES_PER_WRITE) return;
			const stmts = pending;
			pending = [];
			const ahead = queue;
			inFlight++;
			queue = queue.then(() =>
				failure
					? undefined
					: withWriteLock(db, async () => (await importWriter(db)).batch(stmts)).then(
							() => undefined,
							(e) => void (failure = e)
						)
			);
			void queue.then(() => void inFlight--);
			// Waiting for the earlier writes leaves this one alone in flight.
			return inFlight > 1 ? ahead : undefined;
		},
		async rest(): Promise<InStatement[]> {
			await queue;
			if (failure) throw failure;
			const stmts = pending;
			pending = [];
			return stmts;
		},
		async discard() {
			pending = [];
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

/** The statement that drops plan slices no import claimed within the hour (in the preview's last batch). */
export const dropOrphansStatement = (now: Date): InStatement => ({
	sql: 'DELETE FROM import_plan_chunks WHERE import_id IS NULL AND created_at < ?',
	args: [now.getTime() - ORPHAN_MS]
});

/** The ids of an import's plan slices, in file order. */
export async function planChunkIds(db: Db, importId: number): Promise<number[]> {
	const r = await db.$client.execute({
		sql: 'SELECT id FROM import_plan_chunks WHERE import_id = ? ORDER BY seq',
		args: [importId]
	});
	return r.rows.map((row) => Number(row.id));
}
