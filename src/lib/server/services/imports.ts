import { createHash } from 'node:crypto';
import { and, desc, eq } from 'drizzle-orm';
import type { InStatement } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { runBatch, withWriteLock } from '$lib/server/db';
import { factoryTests, importFiles, imports, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import type { RowError } from '$lib/domain/factory-csv';
import { analyseFactoryFile, PLAN_COLUMNS, TESTABLE_SQL, type PreviewRow } from './import-analysis';

export const MAX_IMPORT_BYTES = 25 * 1024 * 1024;

type ImportRow = typeof imports.$inferSelect;

export interface ImportResult {
	import: Omit<ImportRow, 'errors'>;
	errors: RowError[];
	preview: PreviewRow[];
	alreadySent: boolean;
}

const summary = (row: ImportRow, extra: Partial<ImportResult> = {}): ImportResult => {
	const { errors, ...rest } = row;
	return { import: rest, errors: JSON.parse(errors), preview: [], alreadySent: false, ...extra };
};

const TEST_COLUMNS = `module_id, import_id, ${PLAN_COLUMNS.slice(1).join(', ')}`;
const PLAN_FIELDS = PLAN_COLUMNS.map((_, i) => `value ->> ${i}`);
// Not INSERT OR IGNORE: factory_tests is append-only, and its trigger refuses any insert
// that meets an existing row_key; a row stored since the preview is skipped here instead.
const INSERT_FROM_PLAN = `INSERT INTO factory_tests (${TEST_COLUMNS})
	SELECT ${PLAN_FIELDS[0]}, ?, ${PLAN_FIELDS.slice(1).join(', ')}
	FROM json_each((SELECT plan_rows FROM import_files WHERE import_id = ?))
	WHERE (SELECT state FROM modules WHERE id = value ->> 0) IN ${TESTABLE_SQL}
	  AND NOT EXISTS (SELECT 1 FROM factory_tests f WHERE f.row_key = value ->> 1)`;

/**
 * Each module's new state from the plan. The unary `+` keeps SQLite from starting at the
 * state index: it would then scan the whole plan for every testable module (20,000 × 20,000
 * JSON entries, minutes); from the plan, each module is one primary-key lookup
 * (EXPLAIN QUERY PLAN; sqlite.org/optoverview.html#disqualifying_where_clause_terms_using_unary_).
 */
export const STATE_UPDATE_SQL = `UPDATE modules SET state = CASE j.value ->> 1 WHEN 'pass' THEN 'in_stock' ELSE 'test_failed' END,
	  test_outcome = j.value ->> 1, tested_at = j.value ->> 2, updated_at = ?
	FROM json_each((SELECT plan_states FROM import_files WHERE import_id = ?)) AS j
	WHERE modules.id = j.value ->> 0 AND +modules.state IN ${TESTABLE_SQL}
	  AND (modules.tested_at IS NULL OR modules.tested_at <= j.value ->> 2)`;

/**
 * Step one: validates a rig file and keeps it with its counts and its commit plan (the
 * accepted rows as insert-ready JSON, in the database, so any app server can commit it),
 * storing no results. A file already sent (same SHA-256) returns the earlier import.
 */
export async function previewImport(
	db: Db,
	actor: Actor,
	file: { name: string; content: string; bytes: number },
	now = new Date()
): Promise<ImportResult> {
	const sha256 = createHash('sha256').update(file.content).digest('hex');
	const [earlier] = await db
		.select()
		.from(imports)
		.where(and(eq(imports.kind, 'factory_tests'), eq(imports.sha256, sha256)));
	if (earlier) return summary(earlier, { alreadySent: true });

	const a = await analyseFactoryFile(db, file.content, now);
	const rejected = new Set(a.errors.map((e) => e.row)).size;
	const result = await withWriteLock(db, () =>
		runBatch(db, [
			{
				sql: `INSERT INTO imports (kind, sha256, file_name, bytes, uploaded_by, token_id, uploader_label, created_at, status, rows_total, accepted, rejected, duplicates, passed, failed, errors)
				      VALUES ('factory_tests', ?, ?, ?, ?, ?, ?, ?, 'previewed', ?, ?, ?, ?, ?, ?, ?)`,
				args: [
					sha256,
					file.name.slice(0, 200),
					file.bytes,
					actor.userId,
					actor.tokenId ?? null,
					actor.label,
					now.getTime(),
					a.rowsTotal,
					a.accepted,
					rejected,
					a.duplicates.length,
					a.passed,
					a.accepted - a.passed,
					JSON.stringify(a.errors)
				]
			},
			{
				sql: 'INSERT INTO import_files (import_id, content, plan_rows, plan_states) VALUES (last_insert_rowid(), ?, ?, ?)',
				args: [file.content, a.rows, a.states]
			}
		])
	);
	const id = Number(result[0].lastInsertRowid);
	const [row] = await db.select().from(imports).where(eq(imports.id, id));
	return summary(row, { preview: a.preview });
}

/**
 * Step two: stores every accepted row of a previewed import, or none (one transaction of
 * SQL statements reading the stored plan; the rows never pass through JavaScript again).
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
	// The whole commit holds the write lock, so two commits of one import cannot both store.
	return withWriteLock(db, async () => {
		const [row] = await db.select().from(imports).where(eq(imports.id, importId));
		if (!row) throw new NotFoundError(`Import ${importId} does not exist.`);
		if (row.status === 'committed') return summary(row, { alreadySent: true });
		const planned = await db.$client.execute({
			sql: 'SELECT plan_rows IS NOT NULL AS ready FROM import_files WHERE import_id = ?',
			args: [importId]
		});
		let preview: PreviewRow[] = [];
		if (!planned.rows[0]?.ready) {
			// Previewed before plans were kept: judge the stored file again.
			const [f] = await db.select().from(importFiles).where(eq(importFiles.importId, importId));
			const a = await analyseFactoryFile(db, f.content, now);
			preview = a.preview;
			await db.$client.execute({
				sql: 'UPDATE import_files SET plan_rows = ?, plan_states = ? WHERE import_id = ?',
				args: [a.rows, a.states, importId]
			});
		}
		const statements: InStatement[] = [
			{ sql: INSERT_FROM_PLAN, args: [importId, importId] },
			{
				// changes() is still the insert's count here; passed is recounted only if rows went missing.
				sql: `UPDATE imports SET status = 'committed', committed_at = ?1,
				        passed = CASE WHEN changes() = accepted THEN passed ELSE (SELECT count(*) FROM factory_tests WHERE import_id = ?2 AND outcome = 'pass') END,
				        accepted = changes()
				      WHERE id = ?2`,
				args: [now.getTime(), importId]
			},
			{ sql: 'UPDATE imports SET failed = accepted - passed WHERE id = ?', args: [importId] },
			{ sql: STATE_UPDATE_SQL, args: [now.getTime(), importId] },
			{
				sql: 'UPDATE import_files SET plan_rows = NULL, plan_states = NULL WHERE import_id = ?',
				args: [importId]
			},
			{
				sql: `INSERT INTO audit_log (at, actor_user_id, actor_label, action, entity, entity_id, before, after)
				      SELECT ?, ?, ?, 'import.commit', 'import', ?, ?, json_object('status', 'committed', 'fileName', file_name,
				        'accepted', accepted, 'rejected', rejected, 'duplicates', duplicates, 'passed', passed, 'failed', failed)
				      FROM imports WHERE id = ?`,
				args: [
					now.getTime(),
					actor.userId,
					actor.label,
					String(importId),
					JSON.stringify({ status: 'previewed' }),
					importId
				]
			}
		];
		// One batch is one transaction: all accepted rows and state changes, or nothing.
		await runBatch(db, statements);
		const [after] = await db.select().from(imports).where(eq(imports.id, importId));
		return summary(after, { preview });
	});
}

export async function listImports(db: Db, limit = 50) {
	return db
		.select({
			id: imports.id,
			fileName: imports.fileName,
			uploaderLabel: imports.uploaderLabel,
			createdAt: imports.createdAt,
			status: imports.status,
			rowsTotal: imports.rowsTotal,
			accepted: imports.accepted,
			rejected: imports.rejected,
			duplicates: imports.duplicates,
			passed: imports.passed,
			failed: imports.failed,
			committedAt: imports.committedAt
		})
		.from(imports)
		.orderBy(desc(imports.id))
		.limit(limit);
}

export async function getImport(db: Db, id: number) {
	const [row] = await db.select().from(imports).where(eq(imports.id, id));
	if (!row) throw new NotFoundError(`Import ${id} does not exist.`);
	return summary(row);
}

/** The results an import stored, with their module serials (first `limit`). */
export async function importResults(db: Db, id: number, limit = 500) {
	return db
		.select({
			id: factoryTests.id,
			serial: modules.serial,
			testedAt: factoryTests.testedAt,
			capacityAh: factoryTests.capacityAh,
			dcirMohm: factoryTests.dcirMohm,
			cellSpreadMv: factoryTests.cellSpreadMv,
			insulationMohm: factoryTests.insulationMohm,
			outcome: factoryTests.outcome,
			failures: factoryTests.failures
		})
		.from(factoryTests)
		.innerJoin(modules, eq(factoryTests.moduleId, modules.id))
		.where(eq(factoryTests.importId, id))
		.orderBy(factoryTests.id)
		.limit(limit);
}
