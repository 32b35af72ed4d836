import { createHash } from 'node:crypto';
import { and, desc, eq } from 'drizzle-orm';
import type { InStatement } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { factoryTests, importFiles, imports, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import type { RowError } from '$lib/domain/factory-csv';
import { analyseFactoryFile, type AcceptedRow, type Analysis } from './import-analysis';
import { sqlStateList, statesFrom } from '$lib/domain/module-lifecycle';

export const MAX_IMPORT_BYTES = 25 * 1024 * 1024;
const PREVIEW_ROWS = 200;
const ROWS_PER_INSERT = 20_000;

type ImportRow = typeof imports.$inferSelect;

export interface ImportResult {
	import: Omit<ImportRow, 'errors'>;
	errors: RowError[];
	preview: {
		row: number;
		serial: string;
		testedAt: string;
		capacityAh: number;
		dcirMohm: number;
		outcome: 'pass' | 'fail';
		failures: string[];
	}[];
	alreadySent: boolean;
}

type PreviewRow = ImportResult['preview'][number];

/** What a commit needs, compact: the accepted rows already as insert-ready JSON, counts, errors. */
interface CommitPlan {
	chunks: string[];
	counts: {
		accepted: number;
		rejected: number;
		duplicates: number;
		passed: number;
		failed: number;
	};
	errors: RowError[];
	preview: PreviewRow[];
}

function planFrom(importId: number, analysis: Analysis): CommitPlan {
	const passed = analysis.accepted.filter((a) => a.outcome === 'pass').length;
	return {
		chunks: insertChunks(importId, analysis.accepted),
		counts: {
			accepted: analysis.accepted.length,
			rejected: new Set(analysis.errors.map((e) => e.row)).size,
			duplicates: analysis.duplicates.length,
			passed,
			failed: analysis.accepted.length - passed
		},
		errors: analysis.errors,
		preview: previewOf(analysis.accepted)
	};
}

/**
 * The last few previews' plans, so a commit soon after its preview does not read and
 * judge the file a second time. A commit without a cached plan (another process,
 * restart, expiry) judges the file again; stored duplicates are ignored by the unique row key.
 */
const planCache = new Map<number, { at: number; plan: CommitPlan }>();
const CACHE_MS = 15 * 60 * 1000;
const CACHE_MAX = 3;
function remember(importId: number, plan: CommitPlan) {
	planCache.set(importId, { at: Date.now(), plan });
	while (planCache.size > CACHE_MAX) planCache.delete(planCache.keys().next().value!);
}
function recall(importId: number): CommitPlan | null {
	const hit = planCache.get(importId);
	planCache.delete(importId);
	return hit && Date.now() - hit.at < CACHE_MS ? hit.plan : null;
}

const summary = (row: ImportRow, extra: Partial<ImportResult> = {}): ImportResult => {
	const { errors, ...rest } = row;
	return { import: rest, errors: JSON.parse(errors), preview: [], alreadySent: false, ...extra };
};

const previewOf = (accepted: AcceptedRow[]): PreviewRow[] =>
	accepted.slice(0, PREVIEW_ROWS).map((a) => ({
		row: a.row,
		serial: a.value.serial,
		testedAt: a.value.testedAt.toISOString(),
		capacityAh: a.value.capacityAh,
		dcirMohm: a.value.dcirMohm,
		outcome: a.outcome,
		failures: a.failures.map((f) => f.message)
	}));

/**
 * Step one: validates a rig file and keeps it with its counts, storing no results.
 * A file already sent (same SHA-256) returns the earlier import instead of a new one.
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

	const analysis = await analyseFactoryFile(db, file.content, now);
	const passed = analysis.accepted.filter((a) => a.outcome === 'pass').length;
	const row = await withWriteLock(db, () =>
		db.transaction(async (tx) => {
			const [created] = await tx
				.insert(imports)
				.values({
					kind: 'factory_tests',
					sha256,
					fileName: file.name.slice(0, 200),
					bytes: file.bytes,
					uploadedBy: actor.userId,
					tokenId: actor.tokenId ?? null,
					uploaderLabel: actor.label,
					createdAt: now,
					status: 'previewed',
					rowsTotal: analysis.rowsTotal,
					accepted: analysis.accepted.length,
					rejected: new Set(analysis.errors.map((e) => e.row)).size,
					duplicates: analysis.duplicates.length,
					passed,
					failed: analysis.accepted.length - passed,
					errors: JSON.stringify(analysis.errors)
				})
				.returning();
			await tx.insert(importFiles).values({ importId: created.id, content: file.content });
			return created;
		})
	);
	const plan = planFrom(row.id, analysis);
	remember(row.id, plan);
	return summary(row, { preview: plan.preview });
}

const TEST_COLUMNS =
	'module_id, import_id, row_key, tested_at, capacity_ah, energy_wh, dcir_mohm, dcir_source, ocv_v, cell_spread_mv, insulation_mohm, ambient_c, rig, operator, outcome, failures';
const JSON_FIELDS = TEST_COLUMNS.split(',')
	.map((_, i) => `value ->> ${i}`)
	.join(', ');

/**
 * The accepted rows as JSON arrays of 20,000 rows each, for SQLite's json_each to unpack:
 * one prepared statement and one bound value instead of hundreds of thousands, which is
 * both faster and far lighter on memory than multi-row VALUES lists.
 */
function insertChunks(importId: number, rows: AcceptedRow[]): string[] {
	const out: string[] = [];
	for (let i = 0; i < rows.length; i += ROWS_PER_INSERT) {
		const chunk = rows.slice(i, i + ROWS_PER_INSERT).map((r) => {
			const v = r.value;
			return [
				r.moduleId,
				importId,
				r.key,
				v.testedAt.getTime(),
				v.capacityAh,
				v.energyWh,
				v.dcirMohm,
				v.dcirSource,
				v.ocvV,
				v.cellSpreadMv,
				v.insulationMohm,
				v.ambientC,
				v.rig,
				v.operator,
				r.outcome,
				JSON.stringify(r.failures)
			];
		});
		out.push(JSON.stringify(chunk));
	}
	return out;
}

/**
 * Step two: stores every accepted row of a previewed import, or none (one transaction).
 * The latest result of each module sets its state: pass → in stock, fail → failed test.
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
		const plan =
			recall(importId) ??
			planFrom(
				importId,
				await analyseFactoryFile(
					db,
					(await db.select().from(importFiles).where(eq(importFiles.importId, importId)))[0]
						.content,
					now
				)
			);
		const { counts } = plan;
		const statements: InStatement[] = [
			...plan.chunks.map((json) => ({
				// Not INSERT OR IGNORE: factory_tests is append-only, and its trigger refuses any insert
				// that meets an existing row_key (which is how a REPLACE would rewrite history).
				sql: `INSERT INTO factory_tests (${TEST_COLUMNS}) SELECT ${JSON_FIELDS} FROM json_each(?)
				      WHERE NOT EXISTS (SELECT 1 FROM factory_tests f WHERE f.row_key = value ->> 2)`,
				args: [json]
			})),
			{
				sql: `INSERT INTO module_events (module_id, kind, at, actor_user_id, actor_label, summary, detail)
				      SELECT module_id, 'tested', tested_at, ?, ?,
				        CASE outcome WHEN 'pass' THEN 'Factory test passed' || coalesce(' on ' || rig, '')
				        ELSE 'Factory test failed: ' || (SELECT group_concat(json_extract(value, '$.message'), '; ') FROM json_each(failures)) END,
				        json_object('testId', id, 'importId', import_id)
				      FROM factory_tests WHERE import_id = ? ORDER BY tested_at`,
				args: [actor.userId, actor.label, importId]
			},
			{
				sql: `UPDATE modules SET state = CASE t.outcome WHEN 'pass' THEN 'in_stock' ELSE 'test_failed' END,
				        test_outcome = t.outcome, tested_at = t.tested_at, updated_at = ?
				      FROM (SELECT module_id, outcome, tested_at, row_number() OVER (PARTITION BY module_id ORDER BY tested_at DESC, id DESC) AS rn
				            FROM factory_tests WHERE import_id = ?) AS t
				      WHERE t.rn = 1 AND modules.id = t.module_id AND modules.state IN (${sqlStateList(statesFrom('factoryTest'))})
				        AND (modules.tested_at IS NULL OR modules.tested_at <= t.tested_at)`,
				args: [now.getTime(), importId]
			},
			{
				sql: `UPDATE imports SET status = 'committed', committed_at = ?, accepted = ?, rejected = ?, duplicates = ?, passed = ?, failed = ?, errors = ? WHERE id = ?`,
				args: [
					now.getTime(),
					counts.accepted,
					counts.rejected,
					counts.duplicates,
					counts.passed,
					counts.failed,
					JSON.stringify(plan.errors),
					importId
				]
			},
			{
				sql: `INSERT INTO audit_log (at, actor_user_id, actor_label, action, entity, entity_id, before, after) VALUES (?, ?, ?, 'import.commit', 'import', ?, ?, ?)`,
				args: [
					now.getTime(),
					actor.userId,
					actor.label,
					String(importId),
					JSON.stringify({ status: 'previewed' }),
					JSON.stringify({ status: 'committed', fileName: row.fileName, ...counts })
				]
			}
		];
		// One batch is one transaction: all accepted rows, their events and state changes, or nothing.
		await db.$client.batch(statements, 'write');
		const [after] = await db.select().from(imports).where(eq(imports.id, importId));
		return summary(after, { preview: plan.preview });
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
