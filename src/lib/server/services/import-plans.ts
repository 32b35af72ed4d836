import type { InStatement } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { PLAN_COLUMNS, type PlanChunk } from './import-analysis';
import { importWriter } from './import-writer';

/** A plan no import row ever claimed (a preview that failed or a server that stopped) is dropped after this long. */
const ORPHAN_MS = 60 * 60 * 1000;

/** Plan slices written together (about 2 MB): a small file's plan goes with the preview's last batch. */
const SLICES_PER_WRITE = 8;

/** A slice held whole: its rows and states as JSON in the slice's own row (a small file's plan). */
const insertSlice = (planKey: string, chunk: PlanChunk, now: Date): InStatement => ({
	sql: 'INSERT INTO import_plan_chunks (plan_key, seq, rows, states, created_at) VALUES (?, ?, ?, ?, ?)',
	args: [planKey, chunk.seq, chunk.rows, chunk.states, now.getTime()]
});

/**
 * A staged row's id: its slice's id × PLAN_ROW_SPAN + its place in the slice, so a slice's
 * rows are one primary-key range (see `importPlanRows`; the migration's trigger uses the
 * same number). More than CHUNK_ROWS.
 */
export const PLAN_ROW_SPAN = 1 << 20;

/** The first id of a slice's staged rows, from the slice's plan key and place (evaluated once). */
const sliceBase = `(SELECT id FROM import_plan_chunks WHERE plan_key = ?2 AND seq = ?3) * ${PLAN_ROW_SPAN}`;

/**
 * Decodes a slice's JSON once, on the writer's thread while the file is still being read,
 * into one table row per accepted row: the commit then copies rows from table to table
 * (measured on 100,000 rows: 0.85 s instead of 2.1–2.8 s decoding JSON in the commit, which
 * holds the write transaction). `jsonb(value)` once per row, then `b ->> i` (see DEVELOPERS.md).
 */
export const STAGE_ROWS_SQL = `WITH r AS MATERIALIZED (SELECT key AS k, jsonb(value) AS b FROM json_each(?1))
	INSERT INTO import_plan_rows (id, ${PLAN_COLUMNS.join(', ')})
	SELECT ${sliceBase} + k, ${PLAN_COLUMNS.map((_, i) => `b ->> ${i}`).join(', ')} FROM r`;

/** Each module's latest result in a slice, one table row each (id as for the rows). */
export const STAGE_STATES_SQL = `INSERT INTO import_plan_states (id, module_id, outcome, tested_at)
	SELECT ${sliceBase} + key, value ->> 0, value ->> 1, value ->> 2 FROM json_each(?1)`;

/** A slice staged as table rows: its own row keeps empty JSON arrays. */
const stageSlice = (planKey: string, chunk: PlanChunk, now: Date): InStatement[] => [
	{
		sql: "INSERT INTO import_plan_chunks (plan_key, seq, rows, states, created_at) VALUES (?, ?, '[]', '[]', ?)",
		args: [planKey, chunk.seq, now.getTime()]
	},
	{ sql: STAGE_ROWS_SQL, args: [chunk.rows, planKey, chunk.seq] },
	{ sql: STAGE_STATES_SQL, args: [chunk.states, planKey, chunk.seq] }
];

/**
 * Writes a preview's plan slices as they are made, a few at a time (staged as table rows, see
 * STAGE_ROWS_SQL), each write queued behind
 * this process's other writers without holding the preview's loop: the reading of the file
 * goes on while a commit elsewhere holds the write lock. `rest` hands over the slices not
 * written yet (for the preview's last batch, one statement each, their JSON kept whole) after waiting for every write and rethrowing the
 * first failure; `discard` removes what was written (a preview that failed stores nothing).
 * `write` answers a promise to wait for when the writes have fallen behind (more than one
 * write in flight): the reader then waits, so the slices waiting in memory stay bounded
 * (about 2 × SLICES_PER_WRITE) however slow the database is.
 */
export function planWriter(db: Db, planKey: string, now: Date) {
	let queue: Promise<void> = Promise.resolve();
	let failure: unknown = null;
	let pending: PlanChunk[] = [];
	let inFlight = 0;
	return {
		write(chunk: PlanChunk): Promise<void> | undefined {
			pending.push(chunk);
			if (pending.length < SLICES_PER_WRITE) return;
			const stmts = pending.flatMap((c) => stageSlice(planKey, c, now));
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
			const stmts = pending.map((c) => insertSlice(planKey, c, now));
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
