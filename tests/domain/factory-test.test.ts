import { describe, expect, it } from 'vitest';
import { dcirTwoPulse, evaluateResult } from '../../src/lib/domain/factory-test';
import type { TestLimits } from '../../src/lib/domain/model';

describe('dcirTwoPulse — IEC 61960-3 / IEC 62620 two-step pulse', () => {
	it('docs/references.md §3 example: U1 3.300 V @ 56 A, U2 3.244 V @ 280 A → 0.250 mΩ', () => {
		// 280 Ah cell: I1 = 0.2 I_t = 56 A, I2 = 1.0 I_t = 280 A; (0.056 V / 224 A) = 0.25 mΩ [calc]
		expect(dcirTwoPulse({ u1V: 3.3, i1A: 56, u2V: 3.244, i2A: 280 })).toBe(0.25);
	});

	it('agrees with R = (U1 − U2)/(I2 − I1) recomputed here for a 16-cell module', () => {
		const r = { u1V: 52.8, i1A: 20, u2V: 52.5, i2A: 100 };
		expect(dcirTwoPulse(r)).toBeCloseTo(((52.8 - 52.5) / (100 - 20)) * 1000, 9); // 3.75 mΩ
	});

	it('refuses I2 not above I1, since the formula divides by I2 − I1', () => {
		expect(() => dcirTwoPulse({ u1V: 3.3, i1A: 280, u2V: 3.244, i2A: 56 })).toThrow(RangeError);
		expect(() => dcirTwoPulse({ u1V: 3.3, i1A: 56, u2V: 3.244, i2A: 56 })).toThrow(
			/higher than the first/
		);
	});

	it('refuses a voltage that rises under the higher current (swapped columns)', () => {
		expect(() => dcirTwoPulse({ u1V: 3.244, i1A: 56, u2V: 3.3, i2A: 280 })).toThrow(/swapped/);
	});

	it('refuses values that are not numbers', () => {
		expect(() => dcirTwoPulse({ u1V: Number.NaN, i1A: 56, u2V: 3.244, i2A: 280 })).toThrow(/U1/);
	});
});

describe('evaluateResult — factory test verdict against model limits', () => {
	const limits: TestLimits = {
		minCapacityAh: 45,
		maxDcirMohm: 3,
		maxCellSpreadMv: 30,
		minInsulationMohm: 1
	};
	const good = {
		capacityAh: 46.2,
		dcirMohm: 2.1,
		cellSpreadMv: 12,
		insulationMohm: 550,
		serial: 'TW48-0001'
	};

	it('passes a result inside all limits and keeps extra fields out of the verdict', () => {
		expect(evaluateResult(good, limits)).toEqual({ outcome: 'pass', failures: [] });
	});

	it('a value equal to its limit passes (limits are inclusive)', () => {
		const atLimits = { capacityAh: 45, dcirMohm: 3, cellSpreadMv: 30, insulationMohm: 1 };
		expect(evaluateResult(atLimits, limits).outcome).toBe('pass');
	});

	it('names each failed check in a sentence with numbers and units', () => {
		const bad = { capacityAh: 44.1, dcirMohm: 3.4, cellSpreadMv: 35, insulationMohm: 0.8 };
		const v = evaluateResult(bad, limits);
		expect(v.outcome).toBe('fail');
		expect(v.failures.map((f) => [f.check, f.message])).toEqual([
			['capacity', 'Capacity 44.1 Ah below the 45.0 Ah minimum'],
			['dcir', 'DC internal resistance 3.4 mΩ above the 3.0 mΩ limit'],
			['cell_spread', 'Cell voltage spread 35 mV above the 30 mV limit'],
			['insulation', 'Insulation resistance 0.8 MΩ below the 1.0 MΩ minimum']
		]);
	});

	it('shows enough decimals that a failing value never reads the same as its limit', () => {
		const v = evaluateResult({ ...good, dcirMohm: 0.25 }, { ...limits, maxDcirMohm: 0.2 });
		expect(v.failures[0].message).toBe('DC internal resistance 0.25 mΩ above the 0.20 mΩ limit');
		const w = evaluateResult({ ...good, capacityAh: 44.96 }, limits);
		expect(w.failures[0].message).toBe('Capacity 44.96 Ah below the 45.00 Ah minimum');
	});

	it('fails a missing value instead of letting NaN slip through the comparisons', () => {
		const v = evaluateResult({ ...good, insulationMohm: Number.NaN }, limits);
		expect(v.outcome).toBe('fail');
		expect(v.failures[0]).toMatchObject({
			check: 'insulation',
			message: 'Insulation resistance is missing or not a number'
		});
	});
});
