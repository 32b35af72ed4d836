/**
 * The fleet reliability service on the demo fleet (seeded through the real services):
 * exposure, claims and the fit read back from the register, filters and slices, and the
 * replacement cost the admin entered. Expected figures are recomputed here from the rows.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { createSeededDb, actorFor } from '../factories/db';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { reliabilityReport, assemblerDay } from '$lib/server/services/reliability';
import { reliabilityQuerySchema } from '$lib/schemas/reliability';
import { claimRate } from '$lib/domain/reliability';
import type { Db } from '$lib/server/db';

let db: Db;
const q = (over: Record<string, string> = {}) => reliabilityQuerySchema.parse(over);

beforeAll(async () => {
	db = await createSeededDb();
	await seedDemoFleet(db);
}, 180_000);

describe('reliabilityReport on the demo fleet', () => {
	it('counts the modules in service, their claims and a rate with its exact interval', async () => {
		const officer = await actorFor(db, 'warranty@tidewater.example');
		const r = await reliabilityReport(db, officer, q({ asOf: '2026-12-01' }));
		expect(r.unitsInService).toBeGreaterThan(40);
		expect(r.claims.covered).toBe(8);
		expect(r.claims.all).toBe(10);
		expect(r.claims.undecided).toBe(1);
		const rate = claimRate(r.claims.covered, r.unitYears);
		expect(r.ratePer1000UnitYears).toBeCloseTo(rate.ratePer1000, 10);
		expect(r.rateCI95).toEqual(rate.ci95);
		expect(r.weibull.beta).not.toBeNull();
		expect(r.weibull.failures).toBe(8);
		expect(r.reserve.claims).toHaveLength(4);
		expect(r.reserve.cost).not.toBeNull();
		expect(r.plot?.points).toHaveLength(8);
	});

	it('filters by cell lot: the early-failing lot has a higher rate than its sister lot', async () => {
		const officer = await actorFor(db, 'warranty@tidewater.example');
		const bad = await reliabilityReport(db, officer, q({ asOf: '2026-12-01', lot: 'HCL-2015-C' }));
		const good = await reliabilityReport(db, officer, q({ asOf: '2026-12-01', lot: 'HCL-2015-B' }));
		expect(bad.claims.covered).toBe(4);
		expect(good.claims.covered).toBe(0);
		expect(bad.ratePer1000UnitYears!).toBeGreaterThan(good.ratePer1000UnitYears!);
	});

	it('slices by climate band and by build month', async () => {
		const officer = await actorFor(db, 'warranty@tidewater.example');
		const r = await reliabilityReport(db, officer, q({ asOf: '2026-12-01', by: 'climate' }));
		expect(r.slices.map((s) => s.key)).toEqual(
			expect.arrayContaining(['tropical', 'temperate', 'arid'])
		);
		const sum = r.slices.reduce((a, s) => a + s.unitYears, 0);
		expect(sum).toBeCloseTo(r.unitYears, 6); // one climate per module
		const m = await reliabilityReport(db, officer, q({ asOf: '2026-12-01', by: 'buildMonth' }));
		expect(m.slices.map((s) => s.key)).toEqual(
			expect.arrayContaining(['2019-05', '2020-04', '2021-03'])
		);
	});

	it('as of an earlier day sees only what had happened by then', async () => {
		const officer = await actorFor(db, 'warranty@tidewater.example');
		const r = await reliabilityReport(db, officer, q({ asOf: '2021-01-01' }));
		expect(r.claims.covered).toBe(1);
		expect(r.weibull.beta).toBeNull();
	});

	it('business days are the assembler’s calendar days (Etc/GMT-10): 13:59 UTC is the same day, 14:00 UTC the next', () => {
		expect(assemblerDay(new Date('2024-02-28T13:59:59Z'))).toBe('2024-02-28');
		expect(assemblerDay(new Date('2024-02-28T14:00:00Z'))).toBe('2024-02-29');
		expect(assemblerDay(new Date('2024-02-29T14:00:00Z'))).toBe('2024-03-01');
	});

	it('the admin’s replacement cost prices the reserve', async () => {
		const officer = await actorFor(db, 'warranty@tidewater.example');
		const r = await reliabilityReport(db, officer, q({ asOf: '2026-12-01', model: 'TC-HC-48' }));
		const end = r.reserve.claims.find((p) => p.horizonYears === null)!;
		expect(r.reserve.cost!.expected).toBeCloseTo(end.expected * 1580, 4);
	});

	it('rejects a malformed query with a message', () => {
		const bad = reliabilityQuerySchema.safeParse({ asOf: '2023-02-30', by: 'colour' });
		expect(bad.success).toBe(false);
		if (!bad.success) {
			const msgs = bad.error.issues.map((i) => i.message).join(' ');
			expect(msgs).toMatch(/date does not exist/);
			expect(msgs).toMatch(/by must be one of/);
		}
	});
});
