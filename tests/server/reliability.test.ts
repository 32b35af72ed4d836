/**
 * The fleet reliability service on the demo fleet (seeded through the real services):
 * exposure, claims and the fit read back from the register, filters and slices, and the
 * replacement cost the admin entered. Expected figures are recomputed here from the rows.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { createSeededDb, actorFor } from '../factories/db';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { reliabilityReport } from '$lib/server/services/reliability';
import { updateAssemblerCalendar } from '$lib/server/services/calendar';
import { modules } from '$lib/server/db/schema';
import { and, eq, isNotNull } from 'drizzle-orm';
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

	it('business days are the calendar days of the zone the organisation sets, not a fixed one', async () => {
		// Zones from the IANA tz database ("etcetera" file; POSIX signs): Etc/GMT-10 is UTC+10,
		// Etc/GMT+5 is UTC−5. 2012-02-29 14:00 UTC is 1 March 00:00 at UTC+10 and still
		// 29 February (09:00) at UTC−5; one second earlier it is 29 February in both (leap day).
		const officer = await actorFor(db, 'warranty@tidewater.example');
		const admin = await actorFor(db, 'admin@tidewater.example');
		const [mod] = await db
			.select({ id: modules.id, builtAt: modules.builtAt })
			.from(modules)
			.where(and(isNotNull(modules.commissionedAt), isNotNull(modules.builtAt)))
			.limit(1);
		const builtIn = async (at: string) => {
			await db
				.update(modules)
				.set({ builtAt: new Date(at) })
				.where(eq(modules.id, mod.id));
			const r = await reliabilityReport(db, officer, q({ asOf: '2026-12-01' }));
			return r.options.buildMonth.filter((m) => m === '2012-02' || m === '2012-03');
		};
		const reportOn = async (now: string) =>
			(await reliabilityReport(db, officer, q(), new Date(now))).asOf;
		try {
			await updateAssemblerCalendar(db, admin, { timeZone: 'Etc/GMT-10', locale: 'en-GB' });
			expect(await builtIn('2012-02-29T13:59:59Z')).toEqual(['2012-02']);
			expect(await builtIn('2012-02-29T14:00:00Z')).toEqual(['2012-03']);
			expect(await reportOn('2026-11-30T14:00:00Z')).toBe('2026-12-01');
			await updateAssemblerCalendar(db, admin, { timeZone: 'Etc/GMT+5', locale: 'en-GB' });
			expect(await builtIn('2012-02-29T14:00:00Z')).toEqual(['2012-02']);
			expect(await builtIn('2012-03-01T04:59:59Z')).toEqual(['2012-02']);
			expect(await builtIn('2012-03-01T05:00:00Z')).toEqual(['2012-03']);
			expect(await reportOn('2026-11-30T14:00:00Z')).toBe('2026-11-30');
			expect(await reportOn('2026-12-01T04:59:59Z')).toBe('2026-11-30');
			expect(await reportOn('2026-12-01T05:00:00Z')).toBe('2026-12-01');
		} finally {
			await db.update(modules).set({ builtAt: mod.builtAt }).where(eq(modules.id, mod.id));
			await updateAssemblerCalendar(db, admin, { timeZone: 'Etc/GMT-10', locale: 'en-GB' });
		}
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
