/**
 * Batch statistics of factory test results: the four measured quantities with the model limit
 * each is held to, one group's report per quantity (summary, capability, pass/fail, Tukey and
 * Grubbs outliers, histogram), grouping per rig file, ISO 8601 week (UTC) or model, and the
 * ISO week arithmetic. Pure: the service (services/quality.ts) reads the rows and calls these.
 */
import {
	capability,
	describe,
	grubbs,
	histogram,
	tukeyFences,
	type Capability,
	type Description,
	type Histogram
} from './quality';

export const QUALITY_GROUP_BY = ['import', 'week', 'model'] as const;
export type QualityGroupBy = (typeof QUALITY_GROUP_BY)[number];
export type QuantityKey = 'capacity_ah' | 'dcir_mohm' | 'cell_spread_mv' | 'insulation_mohm';

/** Significance level of Grubbs' test on this page (NIST §1.3.5.17 uses 0.05 in its example). */
export const GRUBBS_ALPHA = 0.05;
/** How the page names its methods, so the numbers can be reproduced elsewhere. */
export const QUALITY_METHODS =
	'Tukey fences, Hyndman–Fan type 7 quantiles; Grubbs two-sided α = 0.05, n > 6';

/** One factory result as the batch statistics read it. */
export type QualityRow = {
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
/** The model limits the quantities are held to. */
export type QualityLimits = {
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
	lsl?: (l: QualityLimits) => number;
	usl?: (l: QualityLimits) => number;
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
/** Monday 00:00 UTC of an ISO week 'YYYY-Www' as epoch milliseconds; null for a week that does not exist (W53 of a 52-week year). */
export function isoWeekStart(week: string): number | null {
	const m = /^(\d{4})-W(\d{2})$/.exec(week.slice(0, 8));
	if (!m || week.length !== 8 || Number(m[2]) < 1) return null;
	const start = week1Monday(Number(m[1])) + (Number(m[2]) - 1) * 7 * DAY;
	return isoWeekOf(start) === week ? start : null;
}

export function quantityReport(
	q: (typeof QUANTITIES)[number],
	rows: QualityRow[],
	limits: QualityLimits
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

function groupKey(r: QualityRow, by: QualityGroupBy): string {
	if (by === 'import') return r.importId === null ? 'none' : String(r.importId);
	if (by === 'week') return isoWeekOf(r.testedAt);
	return 'all';
}

function groupLabel(first: QualityRow, by: QualityGroupBy, key: string, modelCode: string): string {
	if (by === 'import') return first.fileName ?? 'Results entered without a rig file';
	if (by === 'week') return `Week ${key}`;
	return `All ${modelCode} results`;
}

/**
 * The groups of a model's results: per rig file, per ISO week (UTC) or one for the model,
 * each with its counts and one report per quantity, newest group first. `rows` come in time order.
 */
export function groupResults(
	rows: QualityRow[],
	by: QualityGroupBy,
	modelCode: string,
	limits: QualityLimits
): QualityGroup[] {
	const byKey = new Map<string, QualityRow[]>();
	for (const r of rows) {
		const key = groupKey(r, by);
		const list = byKey.get(key);
		if (list) list.push(r);
		else byKey.set(key, [r]);
	}
	const groups: QualityGroup[] = [...byKey].map(([key, list]) => ({
		key,
		label: groupLabel(list[0], by, key, modelCode),
		importId: by === 'import' ? list[0].importId : null,
		fileName: by === 'import' ? list[0].fileName : null,
		importedAt: by === 'import' ? list[0].importedAt : null,
		week: by === 'week' ? key : null,
		n: list.length,
		passed: list.filter((r) => r.outcome === 'pass').length,
		failed: list.filter((r) => r.outcome === 'fail').length,
		quantities: QUANTITIES.map((q) => quantityReport(q, list, limits))
	}));
	// Newest first: rows are in time order, so a group's last row dates it.
	const lastAt = (g: QualityGroup) => byKey.get(g.key)!.at(-1)!.testedAt.getTime();
	groups.sort((a, b) => lastAt(b) - lastAt(a));

	return groups;
}
