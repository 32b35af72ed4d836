import { and, asc, count, desc, eq, gte, lt, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { factoryTests, imports, moduleModels, modules } from '$lib/server/db/schema';
import { InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	groupResults,
	isoWeekOf,
	isoWeekStart,
	QUALITY_GROUP_BY,
	QUALITY_METHODS,
	type QualityGroupBy,
	type QualityRow
} from '$lib/domain/quality-batch';

export { QUALITY_GROUP_BY };

export interface QualityQuery {
	modelId: number;
	groupBy: QualityGroupBy;
	importId?: number | null;
	/** ISO 8601 week, 'YYYY-Www', in UTC. */
	week?: string | null;
	/** Only each module's latest result (a retest replaces the earlier one). */
	latestOnly?: boolean;
}

const WEEK = 7 * 86_400_000;

/** [start, end) in UTC of an ISO week 'YYYY-Www'; refuses weeks that do not exist (W53 of a 52-week year). */
export function isoWeekRange(week: string): { start: Date; end: Date } {
	const start = isoWeekStart(week);
	if (start === null)
		throw new InvalidInputError(
			`“${week.slice(0, 20)}” is not an ISO week. Write it as year, W and week number, e.g. 2026-W07.`,
			[{ path: 'week', message: 'Use the form 2026-W07.' }]
		);
	return { start: new Date(start), end: new Date(start + WEEK) };
}

/**
 * Batch statistics of a model's factory test results, grouped per rig file, per ISO week
 * (UTC) or for the model as a whole. Each group gets, per quantity, the summary,
 * capability against the model's limits, pass/fail counts, Tukey and Grubbs outliers
 * (with serial and test id) and histogram bins. Rows come in one query; the statistics
 * are the tested functions of `$lib/domain/quality`.
 * @returns the model with its limits, and the groups newest first (empty when no results match)
 */
export async function qualityReport(db: Db, query: QualityQuery) {
	if (!QUALITY_GROUP_BY.includes(query.groupBy))
		throw new InvalidInputError(
			`Group by import, week or model; not “${String(query.groupBy).slice(0, 20)}”.`
		);
	const [model] = await db
		.select({
			id: moduleModels.id,
			code: moduleModels.code,
			name: moduleModels.name,
			minCapacityAh: moduleModels.minCapacityAh,
			maxDcirMohm: moduleModels.maxDcirMohm,
			maxCellSpreadMv: moduleModels.maxCellSpreadMv,
			minInsulationMohm: moduleModels.minInsulationMohm
		})
		.from(moduleModels)
		.where(eq(moduleModels.id, query.modelId));
	if (!model) throw new NotFoundError(`There is no module model number ${query.modelId}.`);
	const range = query.week ? isoWeekRange(query.week) : null;

	// A later result of the same module (by time, then id) hides this one.
	const later = sql`not exists (select 1 from ${factoryTests} as later where later.module_id = ${factoryTests.moduleId} and (later.tested_at > ${factoryTests.testedAt} or (later.tested_at = ${factoryTests.testedAt} and later.id > ${factoryTests.id})))`;
	const rows: QualityRow[] = await db
		.select({
			testId: factoryTests.id,
			serial: modules.serial,
			testedAt: factoryTests.testedAt,
			outcome: factoryTests.outcome,
			importId: factoryTests.importId,
			fileName: imports.fileName,
			importedAt: imports.createdAt,
			capacity_ah: factoryTests.capacityAh,
			dcir_mohm: factoryTests.dcirMohm,
			cell_spread_mv: factoryTests.cellSpreadMv,
			insulation_mohm: factoryTests.insulationMohm
		})
		.from(factoryTests)
		.innerJoin(modules, eq(factoryTests.moduleId, modules.id))
		.leftJoin(imports, eq(factoryTests.importId, imports.id))
		.where(
			and(
				eq(modules.modelId, model.id),
				query.importId ? eq(factoryTests.importId, query.importId) : undefined,
				range
					? and(gte(factoryTests.testedAt, range.start), lt(factoryTests.testedAt, range.end))
					: undefined,
				query.latestOnly ? later : undefined
			)
		)
		.orderBy(asc(factoryTests.testedAt), asc(factoryTests.id));

	const groups = groupResults(rows, query.groupBy, model.code, model);
	const { id, code, name, ...limits } = model;
	return {
		model: { id, code, name, limits },
		groupBy: query.groupBy,
		importId: query.importId ?? null,
		week: query.week ?? null,
		latestOnly: !!query.latestOnly,
		n: rows.length,
		groups,
		methods: QUALITY_METHODS
	};
}

export type QualityReport = Awaited<ReturnType<typeof qualityReport>>;

/**
 * Choices for the quality filters: every model with its count of factory results, the
 * latest 50 committed rig files, and the ISO weeks (UTC, newest first) that have results
 * for the chosen model. Without `modelId`, the first active model with results is chosen
 * (else the first model).
 */
export async function qualityFilters(db: Db, opts: { modelId?: number | null } = {}) {
	const models = await db
		.select({
			id: moduleModels.id,
			code: moduleModels.code,
			name: moduleModels.name,
			retiredAt: moduleModels.retiredAt,
			tests: count(factoryTests.id)
		})
		.from(moduleModels)
		.leftJoin(modules, eq(modules.modelId, moduleModels.id))
		.leftJoin(factoryTests, eq(factoryTests.moduleId, modules.id))
		.groupBy(moduleModels.id)
		.orderBy(asc(moduleModels.code));
	const recent = await db
		.select({ id: imports.id, fileName: imports.fileName, createdAt: imports.createdAt })
		.from(imports)
		.where(and(eq(imports.kind, 'factory_tests'), eq(imports.status, 'committed')))
		.orderBy(desc(imports.id))
		.limit(50);
	const chosen =
		opts.modelId ??
		models.find((m) => m.tests > 0 && !m.retiredAt)?.id ??
		models.find((m) => m.tests > 0)?.id ??
		models[0]?.id ??
		null;
	// Distinct UTC days first (few rows), then their ISO weeks.
	const days =
		chosen === null
			? []
			: await db
					.selectDistinct({ day: sql<string>`date(${factoryTests.testedAt} / 1000, 'unixepoch')` })
					.from(factoryTests)
					.innerJoin(modules, eq(factoryTests.moduleId, modules.id))
					.where(eq(modules.modelId, chosen));
	const weeks = [...new Set(days.map((d) => isoWeekOf(Date.parse(`${d.day}T00:00:00Z`))))]
		.sort()
		.reverse();
	return { models, imports: recent, weeks, modelId: chosen };
}
