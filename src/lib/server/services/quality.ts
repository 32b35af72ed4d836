import { and, asc, count, desc, eq, gte, lt, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { factoryTests, imports, moduleModels, modules } from '$lib/server/db/schema';
import { InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	capability,
	describe,
	grubbs,
	histogram,
	tukeyFences,
	type Capability,
	type Description,
	type Histogram
} from '$lib/domain/quality';

export const QUALITY_GROUP_BY = ['import', 'week', 'model'] as const;
export type QualityGroupBy = (typeof QUALITY_GROUP_BY)[number];
export type QuantityKey = 'capacity_ah' | 'dcir_mohm' | 'cell_spread_mv' | 'insulation_mohm';

/** Significance level of Grubbs' test on this page (NIST §1.3.5.17 uses 0.05 in its example). */
export const GRUBBS_ALPHA = 0.05;
/** How the page names its methods, so the numbers can be reproduced elsewhere. */
export const QUALITY_METHODS =
	'Tukey fences, Hyndman–Fan type 7 quantiles; Grubbs two-sided α = 0.05, n > 6';

type Row = {
	testId: number;
	serial: string;
	testedAt: Date;
	outcome: 'pass' | 'fail';
	importId: number | null;
	fileName: string | null;
	importedAt: Date | null;
	capacity_ah: number;
	dcir_mohm: number;
	cell_spread_mv: number;
	insulation_mohm: number;
};
type Limits = {
	minCapacityAh: number;
	maxDcirMohm: number;
	maxCellSpreadMv: number;
	minInsulationMohm: number;
};

/** The four measured quantities, with the model limit each is held to (all inclusive, as in evaluateResult). */
const QUANTITIES: {
	key: QuantityKey;
	label: string;
	unit: string;
	lsl?: (l: Limits) => number;
	usl?: (l: Limits) => number;
}[] = [
	{ key: 'capacity_ah', label: 'Capacity', unit: 'Ah', lsl: (l) => l.minCapacityAh },
	{ key: 'dcir_mohm', label: 'DC internal resistance', unit: 'mΩ', usl: (l) => l.maxDcirMohm },
	{
		key: 'cell_spread_mv',
		label: 'Cell voltage spread',
		unit: 'mV',
		usl: (l) => l.maxCellSpreadMv
	},
	{
		key: 'insulation_mohm',
		label: 'Insulation resistance',
		unit: 'MΩ',
		lsl: (l) => l.minInsulationMohm
	}
];

export interface QualityOutlier {
	testId: number;
	serial: string;
	value: number;
	testedAt: Date;
}

export interface QuantityReport {
	key: QuantityKey;
	label: string;
	unit: string;
	lsl: number | null;
	usl: number | null;
	summary: Description;
	capability: Capability;
	/** Results within / beyond this quantity's limit. */
	pass: number;
	fail: number;
	tukey: { q1: number; q3: number; iqr: number; mild: QualityOutlier[]; extreme: QualityOutlier[] };
	grubbs:
		| { applicable: true; g: number; critical: number; outlier: QualityOutlier | null }
		| { applicable: false; reason: string };
	histogram: Histogram;
}

export interface QualityGroup {
	key: string;
	label: string;
	importId: number | null;
	fileName: string | null;
	importedAt: Date | null;
	week: string | null;
	n: number;
	/** Overall verdicts stored with each result. */
	passed: number;
	failed: number;
	quantities: QuantityReport[];
}

export interface QualityQuery {
	modelId: number;
	groupBy: QualityGroupBy;
	importId?: number | null;
	/** ISO 8601 week, 'YYYY-Www', in UTC. */
	week?: string | null;
	/** Only each module's latest result (a retest replaces the earlier one). */
	latestOnly?: boolean;
}

const DAY = 86_400_000;

/** Monday 00:00 UTC of ISO week 1: the week with 4 January in it (ISO 8601). */
function week1Monday(year: number): number {
	const jan4 = Date.UTC(year, 0, 4);
	return jan4 - ((new Date(jan4).getUTCDay() + 6) % 7) * DAY;
}

/** ISO 8601 week of an instant, in UTC: the week belongs to the year of its Thursday. */
export function isoWeekOf(at: Date | number): string {
	const d = new Date(at);
	const thursday =
		Date.UTC(d.getUTCFullYear(), d.getUTCMonth(), d.getUTCDate()) +
		(3 - ((d.getUTCDay() + 6) % 7)) * DAY;
	const year = new Date(thursday).getUTCFullYear();
	const week = 1 + Math.floor((thursday - week1Monday(year)) / (7 * DAY));
	return `${year}-W${String(week).padStart(2, '0')}`;
}

/** [start, end) in UTC of an ISO week 'YYYY-Www'; refuses weeks that do not exist (W53 of a 52-week year). */
export function isoWeekRange(week: string): { start: Date; end: Date } {
	const m = /^(\d{4})-W(\d{2})$/.exec(week);
	const start = m ? week1Monday(Number(m[1])) + (Number(m[2]) - 1) * 7 * DAY : NaN;
	if (!m || Number(m[2]) < 1 || isoWeekOf(start) !== week)
		throw new InvalidInputError(
			`“${week.slice(0, 20)}” is not an ISO week. Write it as year, W and week number, e.g. 2026-W07.`,
			[{ path: 'week', message: 'Use the form 2026-W07.' }]
		);
	return { start: new Date(start), end: new Date(start + 7 * DAY) };
}

function quantityReport(
	q: (typeof QUANTITIES)[number],
	rows: Row[],
	limits: Limits
): QuantityReport {
	const values = rows.map((r) => r[q.key]);
	const lsl = q.lsl?.(limits) ?? null;
	const usl = q.usl?.(limits) ?? null;
	const summary = describe(values);
	const at = (i: number): QualityOutlier => ({
		testId: rows[i].testId,
		serial: rows[i].serial,
		value: values[i],
		testedAt: rows[i].testedAt
	});
	const fences = tukeyFences(values);
	const g = grubbs(values, GRUBBS_ALPHA);
	const fail = values.filter((v) => (lsl !== null && v < lsl) || (usl !== null && v > usl)).length;
	return {
		key: q.key,
		label: q.label,
		unit: q.unit,
		lsl,
		usl,
		summary,
		capability: capability(summary, { lsl, usl }),
		pass: values.length - fail,
		fail,
		tukey: {
			q1: fences.q1,
			q3: fences.q3,
			iqr: fences.iqr,
			mild: fences.mild.map(at),
			extreme: fences.extreme.map(at)
		},
		grubbs: g.applicable
			? { applicable: true, g: g.g, critical: g.critical, outlier: g.outlier ? at(g.index) : null }
			: { applicable: false, reason: g.reason },
		histogram: histogram(values, { lsl, usl })
	};
}

function groupKey(r: Row, by: QualityGroupBy): string {
	if (by === 'import') return r.importId === null ? 'none' : String(r.importId);
	if (by === 'week') return isoWeekOf(r.testedAt);
	return 'all';
}

function groupLabel(first: Row, by: QualityGroupBy, key: string, modelCode: string): string {
	if (by === 'import') return first.fileName ?? 'Results entered without a rig file';
	if (by === 'week') return `Week ${key}`;
	return `All ${modelCode} results`;
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
	const rows: Row[] = await db
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

	const byKey = new Map<string, Row[]>();
	for (const r of rows) {
		const key = groupKey(r, query.groupBy);
		const list = byKey.get(key);
		if (list) list.push(r);
		else byKey.set(key, [r]);
	}
	const groups: QualityGroup[] = [...byKey].map(([key, list]) => ({
		key,
		label: groupLabel(list[0], query.groupBy, key, model.code),
		importId: query.groupBy === 'import' ? list[0].importId : null,
		fileName: query.groupBy === 'import' ? list[0].fileName : null,
		importedAt: query.groupBy === 'import' ? list[0].importedAt : null,
		week: query.groupBy === 'week' ? key : null,
		n: list.length,
		passed: list.filter((r) => r.outcome === 'pass').length,
		failed: list.filter((r) => r.outcome === 'fail').length,
		quantities: QUANTITIES.map((q) => quantityReport(q, list, model))
	}));
	// Newest first: rows are in time order, so a group's last row dates it.
	const lastAt = (g: QualityGroup) => byKey.get(g.key)!.at(-1)!.testedAt.getTime();
	groups.sort((a, b) => lastAt(b) - lastAt(a));

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
