import { desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { factoryTests, moduleCellLots, modules } from '$lib/server/db/schema';
import {
	individualsChart,
	RUN_RULE_TEXT,
	type IndividualsChart,
	type RunRule
} from '$lib/domain/control-chart';

/** Most recent results drawn on a trend chart: enough to see drift, few enough to read. */
export const TREND_POINTS = 400;

const QUANTITIES = [
	{ key: 'capacityAh', label: 'Capacity', unit: 'Ah' },
	{ key: 'dcirMohm', label: 'DC internal resistance', unit: 'mΩ' },
	{ key: 'cellSpreadMv', label: 'Cell voltage spread', unit: 'mV' },
	{ key: 'insulationMohm', label: 'Insulation resistance', unit: 'MΩ' }
] as const;
type QuantityKey = (typeof QUANTITIES)[number]['key'];

export interface TrendPoint {
	testId: number;
	serial: string;
	testedAt: Date;
	value: number;
}

export interface TrendMarker {
	/** Index of the first point after the change. */
	index: number;
	kind: 'lot' | 'rig';
	label: string;
}

export interface QuantityTrend {
	key: QuantityKey;
	label: string;
	unit: string;
	points: TrendPoint[];
	chart: IndividualsChart | null;
	signals: { index: number; rule: RunRule; text: string; serial: string }[];
}

/**
 * Individuals and moving-range charts of a model's latest factory results in time order,
 * one per measured quantity, with run-rule signals and the points where the cell lot or
 * the rig changed. Every result counts, retests included: the chart watches the process.
 */
export async function qualityTrend(db: Db, modelId: number) {
	const rows = (
		await db
			.select({
				testId: factoryTests.id,
				moduleId: factoryTests.moduleId,
				serial: modules.serial,
				testedAt: factoryTests.testedAt,
				rig: factoryTests.rig,
				capacityAh: factoryTests.capacityAh,
				dcirMohm: factoryTests.dcirMohm,
				cellSpreadMv: factoryTests.cellSpreadMv,
				insulationMohm: factoryTests.insulationMohm
			})
			.from(factoryTests)
			.innerJoin(modules, eq(factoryTests.moduleId, modules.id))
			.where(eq(modules.modelId, modelId))
			.orderBy(desc(factoryTests.testedAt), desc(factoryTests.id))
			.limit(TREND_POINTS)
	).reverse();

	const moduleIds = [...new Set(rows.map((r) => r.moduleId))];
	const lots = new Map<number, string>();
	if (moduleIds.length)
		for (const l of await db
			.select({
				moduleId: moduleCellLots.moduleId,
				lots: sql<string>`group_concat(${moduleCellLots.lotCode}, ', ')`
			})
			.from(moduleCellLots)
			.where(inArray(moduleCellLots.moduleId, moduleIds))
			.groupBy(moduleCellLots.moduleId))
			lots.set(l.moduleId, l.lots.split(', ').sort().join(', '));

	const markers: TrendMarker[] = [];
	for (let i = 1; i < rows.length; i++) {
		const lot = lots.get(rows[i].moduleId) ?? '';
		const prevLot = lots.get(rows[i - 1].moduleId) ?? '';
		if (lot !== prevLot) markers.push({ index: i, kind: 'lot', label: lot || 'no lot recorded' });
		if ((rows[i].rig ?? '') !== (rows[i - 1].rig ?? ''))
			markers.push({ index: i, kind: 'rig', label: rows[i].rig ?? 'no rig named' });
	}

	const quantities: QuantityTrend[] = QUANTITIES.map((q) => {
		const points = rows.map((r) => ({
			testId: r.testId,
			serial: r.serial,
			testedAt: r.testedAt,
			value: r[q.key]
		}));
		const chart = individualsChart(points.map((p) => p.value));
		return {
			...q,
			points,
			chart,
			signals: (chart?.signals ?? []).map((s) => ({
				index: s.index,
				rule: s.rule,
				text: RUN_RULE_TEXT[s.rule],
				serial: points[s.index].serial
			}))
		};
	});
	return { n: rows.length, cap: TREND_POINTS, markers, quantities };
}
export type QualityTrend = Awaited<ReturnType<typeof qualityTrend>>;
