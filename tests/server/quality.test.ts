import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import * as ss from 'simple-statistics';
import type { Db } from '$lib/server/db';
import { factoryTests, imports, modules } from '$lib/server/db/schema';
import { isoWeekRange, qualityFilters, qualityReport } from '$lib/server/services/quality';
import { isoWeekOf } from '$lib/domain/quality-batch';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules, modelId } from '../factories/modules';

let db: Db;
let workshop: Actor;
let hc48: number;
let serials: string[];
let fileA: number;
let fileB: number;

/** TC-HC-48 limits in the demo seed: capacity ≥ 45 Ah, DCIR ≤ 6.4 mΩ, spread ≤ 20 mV, insulation ≥ 100 MΩ. */
const CAPACITY_A = [46.4, 46.6, 46.5, 46.7, 46.3, 46.5, 46.6, 46.4, 46.5, 40.1];
const CAPACITY_B = [46.2, 46.8, 46.5, 46.6];
const OUTLIER_INDEX = 9;

async function addImport(fileName: string, rows: number, createdAt: Date) {
	const [row] = await db
		.insert(imports)
		.values({
			kind: 'factory_tests',
			sha256: fileName.padEnd(64, '0'),
			fileName,
			bytes: 100,
			uploaderLabel: 'workshop@tidewater.example',
			status: 'committed',
			rowsTotal: rows,
			accepted: rows,
			rejected: 0,
			duplicates: 0,
			errors: '[]',
			createdAt
		})
		.returning({ id: imports.id });
	return row.id;
}

async function addTest(
	serial: string,
	importId: number | null,
	at: string,
	capacityAh: number,
	n: number
) {
	const [mod] = await db.select({ id: modules.id }).from(modules).where(eq(modules.serial, serial));
	const outcome = capacityAh >= 45 ? 'pass' : 'fail';
	await db.insert(factoryTests).values({
		moduleId: mod.id,
		importId,
		rowKey: `${serial}|${at}|rig-2`,
		testedAt: new Date(at),
		capacityAh,
		dcirMohm: 5.1 + (n % 4) * 0.1,
		dcirSource: 'measured',
		cellSpreadMv: 8 + (n % 5),
		insulationMohm: 400 + n * 10,
		rig: 'rig-2',
		outcome,
		failures:
			outcome === 'pass'
				? '[]'
				: JSON.stringify([
						{ check: 'capacity', message: `Capacity ${capacityAh} Ah below the 45.0 Ah minimum` }
					])
	});
}

beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	hc48 = await modelId(db, 'TC-HC-48');
	serials = await makeModules(db, workshop, { code: 'TC-HC-48', count: 10, built: 10 });
	// File A: Sunday 28 December 2025 (UTC), ISO week 2025-W52; the last one in at 23:30 UTC,
	// already Monday in Central Europe but still week 52 in UTC.
	fileA = await addImport(
		'rig2-2025-12-28.csv',
		CAPACITY_A.length,
		new Date('2025-12-29T06:00:00Z')
	);
	const timeA = (i: number) =>
		i === CAPACITY_A.length - 1
			? '2025-12-28T23:30:00Z'
			: `2025-12-28T${String(10 + i).padStart(2, '0')}:00:00Z`;
	for (const [i, cap] of CAPACITY_A.entries()) await addTest(serials[i], fileA, timeA(i), cap, i);
	// File B: Monday 29 December 2025, ISO week 2026-W01 (1 January 2026 is a Thursday).
	// Its last row retests the outlier's module, which then passes.
	fileB = await addImport(
		'rig2-2025-12-29.csv',
		CAPACITY_B.length,
		new Date('2025-12-30T06:00:00Z')
	);
	const retested = [serials[5], serials[6], serials[7], serials[OUTLIER_INDEX]];
	for (const [i, cap] of CAPACITY_B.entries())
		await addTest(
			retested[i],
			fileB,
			`2025-12-29T${String(8 + i).padStart(2, '0')}:00:00Z`,
			cap,
			20 + i
		);
	// Another model's result must stay out of TC-HC-48's report.
	const [other] = await makeModules(db, workshop, { code: 'TC-HC-24', count: 1, built: 1 });
	await addTest(other, null, '2025-12-28T12:00:00Z', 92, 30);
});

describe('ISO weeks in UTC', () => {
	it('puts a week in the year of its Thursday (ISO 8601)', () => {
		expect(isoWeekOf(new Date('2025-12-28T23:30:00Z'))).toBe('2025-W52');
		expect(isoWeekOf(new Date('2025-12-29T00:00:00Z'))).toBe('2026-W01');
		expect(isoWeekOf(new Date('2021-01-03T12:00:00Z'))).toBe('2020-W53');
		expect(isoWeekOf(new Date('2024-12-30T00:00:00Z'))).toBe('2025-W01');
		expect(isoWeekRange('2026-W01')).toEqual({
			start: new Date('2025-12-29T00:00:00Z'),
			end: new Date('2026-01-05T00:00:00Z')
		});
	});

	it('refuses a malformed week and week 53 of a 52-week year', () => {
		expect(() => isoWeekRange('2026-7')).toThrow(/ISO week/);
		expect(() => isoWeekRange('2025-W53')).toThrow(/ISO week/);
		expect(isoWeekRange('2020-W53').start).toEqual(new Date('2020-12-28T00:00:00Z'));
	});
});

describe('quality report', () => {
	it('groups by rig file with file name, counts and verdicts', async () => {
		const r = await qualityReport(db, { modelId: hc48, groupBy: 'import' });
		expect(r.model.code).toBe('TC-HC-48');
		expect(r.n).toBe(CAPACITY_A.length + CAPACITY_B.length);
		expect(r.groups.map((g) => [g.fileName, g.n, g.passed, g.failed])).toEqual([
			['rig2-2025-12-29.csv', 4, 4, 0],
			['rig2-2025-12-28.csv', 10, 9, 1]
		]);
		const a = r.groups[1];
		expect(a.importId).toBe(fileA);
		expect(a.importedAt).toEqual(new Date('2025-12-29T06:00:00Z'));
	});

	it('gives mean and sample sd as simple-statistics does, and capability against the LSL', async () => {
		const r = await qualityReport(db, { modelId: hc48, groupBy: 'import', importId: fileA });
		expect(r.groups).toHaveLength(1);
		const cap = r.groups[0].quantities.find((q) => q.key === 'capacity_ah')!;
		expect(cap.summary.n).toBe(10);
		expect(cap.summary.mean).toBeCloseTo(ss.mean(CAPACITY_A), 10);
		expect(cap.summary.sd).toBeCloseTo(ss.sampleStandardDeviation(CAPACITY_A), 10);
		expect(cap.lsl).toBe(45);
		expect(cap.usl).toBeNull();
		// One-sided: Cpk = Cpl = (μ − LSL) / 3s, NIST §6.1.6; no Cp without both limits.
		expect(cap.capability.cp).toBeNull();
		expect(cap.capability.cpk).toBeCloseTo(
			(ss.mean(CAPACITY_A) - 45) / (3 * ss.sampleStandardDeviation(CAPACITY_A)),
			10
		);
		expect([cap.pass, cap.fail]).toEqual([9, 1]);
		expect(cap.histogram.counts.reduce((s, c) => s + c, 0)).toBe(10);
		expect(cap.histogram.belowLsl).toBe(1);
		const dcir = r.groups[0].quantities.find((q) => q.key === 'dcir_mohm')!;
		expect([dcir.lsl, dcir.usl]).toEqual([null, 6.4]);
	});

	it('reports the low-capacity module as an outlier by both methods, with its serial', async () => {
		const r = await qualityReport(db, { modelId: hc48, groupBy: 'import', importId: fileA });
		const cap = r.groups[0].quantities.find((q) => q.key === 'capacity_ah')!;
		expect(cap.tukey.extreme.map((o) => [o.serial, o.value])).toEqual([
			[serials[OUTLIER_INDEX], 40.1]
		]);
		expect(cap.tukey.extreme[0].testId).toBeTypeOf('number');
		expect(cap.grubbs.applicable).toBe(true);
		if (cap.grubbs.applicable)
			expect(cap.grubbs.outlier).toMatchObject({ serial: serials[OUTLIER_INDEX], value: 40.1 });
	});

	it('says Grubbs is not applicable for a group of six or fewer results', async () => {
		const r = await qualityReport(db, { modelId: hc48, groupBy: 'import', importId: fileB });
		expect(r.groups[0].n).toBe(4);
		for (const q of r.groups[0].quantities) {
			expect(q.grubbs.applicable).toBe(false);
			if (!q.grubbs.applicable) expect(q.grubbs.reason).toMatch(/at least 7 values; there are 4/);
		}
	});

	it('groups by ISO week in UTC and filters to one week', async () => {
		const r = await qualityReport(db, { modelId: hc48, groupBy: 'week' });
		expect(r.groups.map((g) => [g.week, g.n])).toEqual([
			['2026-W01', 4],
			['2025-W52', 10]
		]);
		const one = await qualityReport(db, { modelId: hc48, groupBy: 'model', week: '2025-W52' });
		expect(one.groups.map((g) => g.n)).toEqual([10]);
		await expect(
			qualityReport(db, { modelId: hc48, groupBy: 'week', week: 'last week' })
		).rejects.toThrow(/ISO week/);
	});

	it('takes the model as a whole, or only each module’s latest result', async () => {
		const all = await qualityReport(db, { modelId: hc48, groupBy: 'model' });
		expect(all.groups).toHaveLength(1);
		expect(all.groups[0].n).toBe(14);
		const latest = await qualityReport(db, { modelId: hc48, groupBy: 'model', latestOnly: true });
		expect(latest.groups[0].n).toBe(10);
		const cap = latest.groups[0].quantities.find((q) => q.key === 'capacity_ah')!;
		expect(cap.fail).toBe(0);
		expect(cap.tukey.extreme.map((o) => o.serial)).not.toContain(serials[OUTLIER_INDEX]);
	});

	it('answers an empty report for a model without results and refuses an unknown model', async () => {
		const hc12 = await modelId(db, 'TC-HC-12');
		const r = await qualityReport(db, { modelId: hc12, groupBy: 'import' });
		expect(r.groups).toEqual([]);
		await expect(qualityReport(db, { modelId: 99_999, groupBy: 'model' })).rejects.toThrow(
			/no module model/i
		);
	});
});

describe('quality filters', () => {
	it('lists models with result counts, committed rig files newest first and weeks with data', async () => {
		const f = await qualityFilters(db, { modelId: hc48 });
		expect(Object.fromEntries(f.models.map((m) => [m.code, m.tests]))).toMatchObject({
			'TC-HC-48': 14,
			'TC-HC-24': 1,
			'TC-HC-12': 0
		});
		expect(f.imports.map((i) => i.fileName)).toEqual([
			'rig2-2025-12-29.csv',
			'rig2-2025-12-28.csv'
		]);
		expect(f.weeks).toEqual(['2026-W01', '2025-W52']);
		expect(f.modelId).toBe(hc48);
	});
});
