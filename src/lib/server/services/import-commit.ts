import { randomUUID } from 'node:crypto';
import { promisify } from 'node:util';
import { gunzip } from 'node:zlib';
import { eq } from 'drizzle-orm';
import type { InStatement } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { importFiles, imports } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import { analyseFactoryFile, PLAN_COLUMNS, TESTABLE_SQL, type PreviewRow } from './import-analysis';
import { planChunkIds, planWriter } from './import-plans';
import { summary, type ImportResult } from './import-summary';
import { importWriter, type UnitArg, type UnitStatement, type WriteTx } from './import-writer';

const TEST_COLUMNS = `module_id, import_id, ${PLAN_COLUMNS.slice(1).join(', ')}`;
const field = (i: number) => `b ->> ${i}`;
/**
 * One plan slice into factory_tests. Each row's JSON array is turned into SQLite's binary
 * JSON once (the MATERIALIZED table), so its 15 values are read from it without parsing the
 * text 15 times (measured: 2.5 × faster than `value ->> i` on the text, see DEVELOPERS.md).
 * Not INSERT OR IGNORE: factory_tests is append-only, and its trigger refuses any insert that
 * meets an existing row_key; a row stored since the preview is skipped here instead, as is a
 * row whose module has left the workshop since.
 */
export const INSERT_CHUNK_SQL = `WITH r AS MATERIALIZED (
	  SELECT jsonb(value) AS b FROM json_each((SELECT rows FROM import_plan_chunks WHERE id = ?1))
	)
	INSERT INTO factory_tests (${TEST_COLUMNS})
	SELECT ${field(0)}, ?2, ${PLAN_COLUMNS.slice(1)
		.map((_, i) => field(i + 1))
		.join(', ')}
	FROM r
	WHERE (SELECT state FROM modules WHERE id = ${field(0)}) IN ${TESTABLE_SQL}
	  AND NOT EXISTS (SELECT 1 FROM factory_tests f WHERE f.row_key = ${field(1)})`;

/**
 * Each module's new state from a plan slice. The unary `+` keeps SQLite from starting at the
 * state index: it would then scan the plan for every testable module (quadratic); from the
 * plan, each module is one primary-key lookup
 * (EXPLAIN QUERY PLAN; sqlite.org/optoverview.html#disqualifying_where_clause_terms_using_unary_).
 */
export const STATE_UPDATE_SQL = `UPDATE modules SET state = CASE j.value ->> 1 WHEN 'pass' THEN 'in_stock' ELSE 'test_failed' END,
	  test_outcome = j.value ->> 1, tested_at = j.value ->> 2, updated_at = ?
	FROM json_each((SELECT states FROM import_plan_chunks WHERE id = ?)) AS j
	WHERE modules.id = j.value ->> 0 AND +modules.state IN ${TESTABLE_SQL}
	  AND (modules.tested_at IS NULL OR modules.tested_at <= j.value ->> 2)`;

const gunzipAsync = promisify(gunzip);
const breathe = () => new Promise<void>((r) => setImmediate(r));

/**
 * Plans an import previewed before plans were kept in slices: its stored file is judged
 * again (outside the write lock: the plan is written as it is made). Two commits racing here
 * keep one plan; the other is dropped.
 */
async function replan(db: Db, importId: number, now: Date): Promise<PreviewRow[]> {
	const [f] = await db.select().from(importFiles).where(eq(importFiles.importId, importId));
	if (!f) return [];
	const planKey = `import-${importId}-${randomUUID()}`;
	const plan = planWriter(db, planKey, now);
	try {
		const text = f.contentGzip ? (await gunzipAsync(f.contentGzip)).toString('utf8') : f.content;
		const a = await analyseFactoryFile(db, text, now, (chunk) => plan.write(chunk));
		const rest = await plan.rest();
		await withWriteLock(db, async () =>
			(await importWriter(db)).batch([
				...rest,
				{
					sql: `UPDATE import_plan_chunks SET import_id = ?1 WHERE plan_key = ?2
						        AND NOT EXISTS (SELECT 1 FROM import_plan_chunks WHERE import_id = ?1)`,
					args: [importId, planKey]
				},
				{
					sql: 'UPDATE import_files SET plan_rows = NULL, plan_states = NULL WHERE import_id = ?',
					args: [importId]
				}
			])
		);
		return a.preview;
	} finally {
		await plan.discard();
	}
}

/**
 * Step two: stores every accepted row of a previewed import, or none. One write transaction
 * of short statements, a plan slice (≤ CHUNK_ROWS rows) each, with the event loop let
 * through between them: other requests are served while a large file is stored, readers see
 * the import only once it is complete (WAL snapshot), and a failure rolls all of it back.
 * The latest result of each module sets its state: pass → in stock, fail → failed test.
 * A module that left the workshop since the preview gets no row; the counts are those stored.
 * The module's timeline shows each stored result from `factory_tests` itself (no copy).
 */
export async function commitImport(
	db: Db,
	actor: Actor,
	importId: number,
	now = new Date()
): Promise<ImportResult> {
	// The whole commit holds this process's write lock: two commits of one import cannot both
	// store, and no other writer of this process meets the open transaction (it queues).
	const [first] = await db.select().from(imports).where(eq(imports.id, importId));
	if (!first) throw new NotFoundError(`Import ${importId} does not exist.`);
	if (first.status === 'committed') return summary(first, { alreadySent: true });
	let preview: PreviewRow[] = [];
	if (first.accepted > 0 && (await planChunkIds(db, importId)).length === 0)
		preview = await replan(db, importId, now);
	return withWriteLock(db, async () => {
		const [row] = await db.select().from(imports).where(eq(imports.id, importId));
		if (row.status === 'committed') return summary(row, { alreadySent: true });
		const chunks = await planChunkIds(db, importId);
		const tx = await (await importWriter(db)).transaction();
		try {
			if (!(await storePlan(tx, actor, importId, chunks, row.accepted, now))) {
				await tx.rollback();
				const [after] = await db.select().from(imports).where(eq(imports.id, importId));
				return summary(after, { alreadySent: true });
			}
			await tx.commit();
		} finally {
			tx.close();
		}
		const [after] = await db.select().from(imports).where(eq(imports.id, importId));
		return summary(after, { preview });
	});
}

/** The claim of a previewed import: no statement stores anything for an import no longer previewed. */
const claimStatement = (importId: UnitArg, now: Date): UnitStatement => ({
	sql: "UPDATE imports SET status = 'committed', committed_at = ? WHERE id = ? AND status = 'previewed'",
	args: [now.getTime(), importId]
});

/** One plan slice into factory_tests and the modules' states, then the slice itself deleted. */
const sliceStatements = (importId: UnitArg, chunk: UnitArg, now: Date): UnitStatement[] => [
	{ sql: INSERT_CHUNK_SQL, args: [chunk, importId] },
	{ sql: STATE_UPDATE_SQL, args: [now.getTime(), chunk] },
	{ sql: 'DELETE FROM import_plan_chunks WHERE id = ?', args: [chunk] }
];

/**
 * Inside an open write transaction: claims the previewed import, stores its plan slices (in
 * file order) and their states, deletes them, stores the counts and the audit entry. False
 * when the import was no longer previewed (another app server committed it first): the caller
 * rolls back.
 */
export async function storePlan(
	tx: WriteTx,
	actor: Actor,
	importId: number,
	chunks: number[],
	planned: number,
	now: Date
): Promise<boolean> {
	// Claimed first, in the transaction: another app server committing the same import at the
	// same time stores nothing twice.
	const claimed = await tx.execute(claimStatement(importId, now) as InStatement);
	if (claimed.rowsAffected === 0) return false;
	let stored = 0;
	// On the writer's thread several slices go in one message (each message's answer waits for
	// a turn of this busy event loop); through the in-process client one at a time, with the
	// event loop let through between them.
	const per = tx.slicesPerMessage ?? 1;
	for (let i = 0; i < chunks.length; i += per) {
		const done = await tx.batch(
			chunks.slice(i, i + per).flatMap((c) => sliceStatements(importId, c, now)) as InStatement[]
		);
		for (let j = 0; j < done.length; j += 3) stored += done[j].rowsAffected;
		await breathe();
	}
	await tx.batch(countStatements(actor, importId, stored, planned, now) as InStatement[]);
	return true;
}

/**
 * The same as `storePlan`, as statements of one unit (`ImportWriter.unit`) that also holds the
 * import's own insert: `importId` and the slices are references to row ids the unit inserts,
 * so a small file is previewed and stored in one message to the writer. The import was
 * inserted as previewed in the same transaction, so its claim cannot fail; the counts are
 * counted (the rows stored are not known before the unit runs).
 */
export function storePlanUnit(
	actor: Actor,
	importId: UnitArg,
	chunks: UnitArg[],
	planned: number,
	now: Date
): UnitStatement[] {
	return [
		claimStatement(importId, now),
		...chunks.flatMap((chunk) => sliceStatements(importId, chunk, now)),
		...countStatements(actor, importId, null, planned, now)
	];
}

/**
 * The counts of what was stored and the audit entry. With `stored` (what the inserts said)
 * they are recounted only if rows went missing since the preview; without, counted.
 */
function countStatements(
	actor: Actor,
	importId: UnitArg,
	stored: number | null,
	planned: number,
	now: Date
): UnitStatement[] {
	return [
		{
			sql: `UPDATE imports SET accepted = coalesce(?1, (SELECT count(*) FROM factory_tests WHERE import_id = ?2)),
			        passed = CASE WHEN ?1 = ?3 THEN passed ELSE (SELECT count(*) FROM factory_tests WHERE import_id = ?2 AND outcome = 'pass') END
			      WHERE id = ?2`,
			args: [stored, importId, planned]
		},
		{ sql: 'UPDATE imports SET failed = accepted - passed WHERE id = ?', args: [importId] },
		{
			sql: `INSERT INTO audit_log (at, actor_user_id, actor_label, action, entity, entity_id, before, after)
			      SELECT ?, ?, ?, 'import.commit', 'import', CAST(id AS TEXT), ?, json_object('status', 'committed', 'fileName', file_name,
			        'accepted', accepted, 'rejected', rejected, 'duplicates', duplicates, 'passed', passed, 'failed', failed)
			      FROM imports WHERE id = ?`,
			args: [
				now.getTime(),
				actor.userId,
				actor.label,
				JSON.stringify({ status: 'previewed' }),
				importId
			]
		}
	];
}
