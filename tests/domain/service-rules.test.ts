/**
 * Rules that moved out of the services into the domain: implausible claim evidence, the next
 * empty slot of a system, and a system's continuous current limit. Expected values are worked
 * by hand from the definitions named beside each check.
 */
import { describe, expect, it } from 'vitest';
import { implausibleEvidence, perModuleThroughput } from '../../src/lib/domain/claim-evidence';
import { nextEmptySlot } from '../../src/lib/domain/system-slots';
import { systemCurrentLimitA } from '../../src/lib/domain/commissioning';

// C-rate: the current that would discharge the rated capacity in 1/C hours (I = C × Ah),
// the usual definition (e.g. IEC 61960-3 uses It = C5/1 h as reference current). A full
// discharge and a full recharge at C therefore take 2/C hours: at most 24 / (2/C) = 12 × C
// equivalent full cycles a day.
describe('implausible evidence', () => {
	const model = { code: 'TC-HC-48', maxContinuousC: 0.5, usableWh: 1000 };
	const now = new Date('2026-03-11T00:00:00Z');
	const calendar = { timeZone: 'UTC', locale: 'en-GB' };
	const ctx = { model, moduleCount: 1, startsOn: '2026-03-01', now, calendar }; // 10 days
	const ev = (o: object) => ({ throughputScope: 'module' as const, ...o });

	it('accepts exactly 12 × C cycles a day and refuses one watt-hour more', () => {
		// 0.5 C → 6 cycles a day × 1000 Wh × 10 days = 60 000 Wh.
		expect(implausibleEvidence(ev({ throughputWh: 60_000 }), ctx)).toEqual([]);
		const over = implausibleEvidence(ev({ throughputWh: 60_001 }), ctx);
		expect(over.map((i) => i.path)).toEqual(['throughputWh']);
		expect(over[0].message).toMatch(/cannot do more than 6 a day at its 0.5 C maximum rate/);
	});

	it('shares a system figure over the modules before judging it', () => {
		// 120 000 Wh for a system of 2 modules is 60 000 Wh each: still plausible.
		expect(perModuleThroughput({ throughputWh: 120_000, throughputScope: 'system' }, 2)).toBe(
			60_000
		);
		expect(
			implausibleEvidence(
				{ throughputWh: 120_000, throughputScope: 'system' },
				{
					...ctx,
					moduleCount: 2
				}
			)
		).toEqual([]);
	});

	it('judges a cycle counter the same way: 60 cycles in 10 days pass, 61 do not', () => {
		expect(implausibleEvidence(ev({ cycleCount: 60 }), ctx)).toEqual([]);
		expect(implausibleEvidence(ev({ cycleCount: 61 }), ctx).map((i) => i.path)).toEqual([
			'cycleCount'
		]);
	});

	it('refuses a log that ends after today, and takes one ending today', () => {
		const later = ev({ log: { lastAt: '2026-03-12T00:10:00Z' } });
		expect(implausibleEvidence(later, ctx).map((i) => i.path)).toEqual(['log']);
		expect(implausibleEvidence(ev({ log: { lastAt: '2026-03-11T00:00:00Z' } }), ctx)).toEqual([]);
	});

	it("reads today on the assembler's calendar: in Etc/GMT-10 (UTC+10) 14:00 UTC is already the next day", () => {
		// IANA tz database: Etc/GMT-10 is ten hours ahead of UTC (the sign is inverted by POSIX convention).
		const east = { timeZone: 'Etc/GMT-10', locale: 'en-GB' };
		const log = ev({ log: { lastAt: '2026-03-12T00:10:00Z' } });
		const before = { ...ctx, now: new Date('2026-03-11T13:59:59Z'), calendar: east }; // 23:59:59 on the 11th
		const after = { ...ctx, now: new Date('2026-03-11T14:00:00Z'), calendar: east }; // 00:00 on the 12th
		expect(implausibleEvidence(log, before).map((i) => i.path)).toEqual(['log']);
		expect(implausibleEvidence(log, after)).toEqual([]);
	});

	it('reads a log ending on the leap day against the local day either side of its midnight', () => {
		// 2028 is a leap year (Gregorian rule: divisible by 4, not a century): 29 February exists.
		const east = { timeZone: 'Etc/GMT-10', locale: 'en-GB' };
		const log = ev({ log: { lastAt: '2028-02-29T06:00:00Z' } });
		const at = (iso: string) => ({ ...ctx, now: new Date(iso), calendar: east });
		// 23:59:59 on 28 February there: a log dated the 29th is after today.
		expect(implausibleEvidence(log, at('2028-02-28T13:59:59Z')).map((i) => i.path)).toEqual([
			'log'
		]);
		// 00:00 on 29 February there: today.
		expect(implausibleEvidence(log, at('2028-02-28T14:00:00Z'))).toEqual([]);
	});

	it('cannot judge a rate without a warranty start', () => {
		expect(implausibleEvidence(ev({ throughputWh: 1e12 }), { ...ctx, startsOn: null })).toEqual([]);
	});
});

describe('next empty slot', () => {
	it('fills string 1 from position 1, then string 2', () => {
		expect(nextEmptySlot(2, 2, [])).toEqual({ stringNo: 1, position: 1 });
		expect(
			nextEmptySlot(2, 2, [
				{ stringNo: 1, position: 1 },
				{ stringNo: 1, position: 2 }
			])
		).toEqual({ stringNo: 2, position: 1 });
		expect(nextEmptySlot(2, 2, [{ stringNo: 1, position: 2 }])).toEqual({
			stringNo: 1,
			position: 1
		});
	});
	it('is null when every slot is taken', () => {
		expect(
			nextEmptySlot(1, 2, [
				{ stringNo: 2, position: 1 },
				{ stringNo: 1, position: 1 }
			])
		).toBeNull();
	});
});

describe('system current limit', () => {
	// 0.5 C × 100 Ah = 50 A per string (I = C × Ah), × 2 strings in parallel = 100 A.
	const base = { maxContinuousC: 0.5, ratedAh: 100, parallel: 2 };
	it('is the inverter limit where it is below what the strings deliver', () =>
		expect(systemCurrentLimitA({ ...base, maxChargeA: 60, maxDischargeA: 80 })).toBe(80));
	it('never exceeds what the strings deliver', () =>
		expect(systemCurrentLimitA({ ...base, maxChargeA: 150 })).toBe(100));
	it('is exactly the strings’ current at the tie', () =>
		expect(systemCurrentLimitA({ ...base, maxDischargeA: 100 })).toBe(100));
	it('is undefined when the inverter records no limit', () => {
		expect(systemCurrentLimitA(base)).toBeUndefined();
		expect(systemCurrentLimitA({ ...base, maxChargeA: null, maxDischargeA: 0 })).toBeUndefined();
	});
});
