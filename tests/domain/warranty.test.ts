import { describe, expect, it } from 'vitest';
import { addYears, format } from 'date-fns';
import {
	R_GAS,
	arrheniusFactor,
	assessClaim,
	capacityRetentionPct,
	deratedCycles,
	equivalentFullCycles,
	equivalentFullCyclesChargeBasis,
	fitActivationEnergy,
	promisedRetentionPct,
	warrantyTermEnd,
	yearsBetween,
	type ClaimInput
} from '../../src/lib/domain/warranty';
import type { WarrantyTerms } from '../../src/lib/domain/model';
import { assessRequestSchema, claimEvidenceSchema } from '../../src/lib/schemas/warranty-assess';

// Invented TC-HC terms (demo numbers, not a datasheet).
const terms: WarrantyTerms = {
	years: 15,
	ratedCycles: 20000,
	endRetentionPct: 80,
	referenceTempC: 25,
	hotTempC: 55,
	hotRatedCycles: 4000
};

// Independent recomputation for the [calc] rows: same formula, written out here.
const K = (c: number) => c + 273.15;
const af = (ea: number, t1: number, t2: number) =>
	Math.exp((ea / 8.314462618) * (1 / K(t1) - 1 / K(t2)));

// 16 × 3.2 V × 280 Ah = 14 336 Wh (docs/references.md §2).
const usableWh = 16 * 3.2 * 280;

const claim = (over: Partial<ClaimInput> = {}): ClaimInput => ({
	terms,
	commissionedOn: '2020-03-01',
	claimedOn: '2024-06-10',
	ratedCapacityAh: 280,
	measuredCapacityAh: 203.3,
	usableWh,
	throughputWh: 9120 * usableWh,
	avgCellTempC: 25,
	stopChargeProven: true,
	...over
});

describe('Arrhenius (docs/references.md §5)', () => {
	it('R is the CODATA 2018 value, exact in the 2019 SI (docs/references.md §5, pub)', () => {
		expect(R_GAS).toBe(8.314462618);
	});

	it('25 → 55 °C: Ea 50 kJ/mol gives 6.3215, 60 kJ/mol gives 9.1408 (docs/references.md §5, calc)', () => {
		expect(arrheniusFactor(50000, 25, 55)).toBeCloseTo(6.3215, 4);
		expect(arrheniusFactor(60000, 25, 55)).toBeCloseTo(9.1408, 4);
		expect(arrheniusFactor(50000, 25, 55)).toBeCloseTo(af(50000, 25, 55), 12);
	});

	it('is 1 at equal temperatures and inverts when the temperatures swap (calc)', () => {
		expect(arrheniusFactor(50000, 40, 40)).toBe(1);
		expect(arrheniusFactor(50000, 55, 25)).toBeCloseTo(1 / 6.3215, 4);
	});

	it('"10 °C rule", from memory: life halves per 10 K, so ×8 from 25 to 55 °C; the Arrhenius fit needs Ea ≈ 56 kJ/mol for that (docs/references.md §5, calc)', () => {
		const rule = 2 ** ((55 - 25) / 10);
		expect(rule).toBe(8);
		const ea = fitActivationEnergy(25, 8, 55, 1);
		expect(ea / 1000).toBeCloseTo(56.39, 2);
		expect(arrheniusFactor(ea, 25, 55)).toBeCloseTo(8, 10);
		// 56 kJ/mol, the round figure, lands near ×8 too.
		expect(arrheniusFactor(56000, 25, 55)).toBeGreaterThan(7.8);
		expect(arrheniusFactor(56000, 25, 55)).toBeLessThan(8);
		// Unlike the rule, Arrhenius is not a constant ×2 per 10 K: the first step is larger.
		expect(arrheniusFactor(ea, 25, 35)).toBeGreaterThan(arrheniusFactor(ea, 45, 55));
	});

	it('common practice: titanate-type cells rated 20,000 cycles at 25 °C still give 4,000 at 55 °C; the fit gives Ea ≈ 43.6 kJ/mol (docs/references.md §5, calc)', () => {
		const ea = fitActivationEnergy(25, 20000, 55, 4000);
		// Ea = R ln(20000/4000) / (1/298.15 − 1/328.15); recomputed here: 43.641 kJ/mol.
		const expected = (8.314462618 * Math.log(5)) / (1 / 298.15 - 1 / 328.15);
		expect(ea).toBeCloseTo(expected, 6);
		expect(ea / 1000).toBeCloseTo(43.64, 2);
		// The fit passes exactly through both points.
		expect(20000 / arrheniusFactor(ea, 25, 55)).toBeCloseTo(4000, 8);
	});

	it('refuses a fit whose hot point is not hotter, or not shorter-lived', () => {
		expect(() => fitActivationEnergy(25, 20000, 25, 4000)).toThrow(RangeError);
		expect(() => fitActivationEnergy(25, 20000, 55, 20000)).toThrow(RangeError);
		expect(() => fitActivationEnergy(25, 0, 55, 4000)).toThrow(RangeError);
		expect(() => arrheniusFactor(50000, -300, 25)).toThrow(RangeError);
	});
});

describe('deratedCycles (docs/references.md §5)', () => {
	it('at 40 °C the derated cycles lie between the two rated points: 8,606 (calc)', () => {
		const d = deratedCycles(terms, 40);
		const ea = (R_GAS * Math.log(5)) / (1 / K(25) - 1 / K(55));
		expect(d.cycles).toBeCloseTo(20000 / af(ea, 25, 40), 6);
		expect(d.cycles).toBeGreaterThan(4000);
		expect(d.cycles).toBeLessThan(20000);
		expect(Math.round(d.cycles)).toBe(8606);
		expect(d.derated).toBe(true);
		expect(d.reason).toBe(
			'At an average cell temperature of 40 °C the rated cycles derate from 20,000 to 8,606 (Arrhenius fit through 20,000 at 25 °C and 4,000 at 55 °C, Ea 43.6 kJ/mol).'
		);
	});

	it('gives the hot rated cycles at the hot point', () => {
		expect(deratedCycles(terms, 55).cycles).toBeCloseTo(4000, 8);
	});

	it('does not derate at or below the reference temperature', () => {
		for (const t of [25, 20, -10]) {
			const d = deratedCycles(terms, t);
			expect(d.cycles).toBe(20000);
			expect(d.derated).toBe(false);
			expect(d.factor).toBe(1);
		}
		expect(deratedCycles(terms, 20).reason).toBe(
			'The average cell temperature of 20 °C is at or below the 25 °C reference, so the 20,000 cycles rated at 25 °C apply without derating.'
		);
	});

	it('does not derate when the temperature is unknown, and says so', () => {
		const d = deratedCycles(terms, null);
		expect(d.cycles).toBe(20000);
		expect(d.reason).toBe(
			'No average cell temperature was given, so the 20,000 cycles rated at 25 °C are used without derating.'
		);
	});

	it('extrapolates beyond the hot point and says so', () => {
		const d = deratedCycles(terms, 60);
		expect(d.cycles).toBeLessThan(4000);
		expect(d.reason).toContain('60 °C is beyond the 55 °C hot point, so the fit is extrapolated');
	});
});

describe('cycles and capacity (docs/references.md §2)', () => {
	it('energy basis: 1,433,600 Wh over a 14,336 Wh battery = 100.0 EFC (docs/references.md §2, calc)', () => {
		expect(usableWh).toBeCloseTo(14336, 9);
		expect(equivalentFullCycles({ throughputWh: 1433600, usableWh: 14336 })).toBe(100);
	});

	it('charge basis, not used for assessment: (150,000 + 142,000) Ah / (2 × 280 Ah) = 521.43 (docs/references.md §2, calc)', () => {
		expect(equivalentFullCyclesChargeBasis(150000, 142000, 280)).toBeCloseTo(521.43, 2);
	});

	it('rejects a zero usable energy or negative throughput', () => {
		expect(() => equivalentFullCycles({ throughputWh: 1, usableWh: 0 })).toThrow(RangeError);
		expect(() => equivalentFullCycles({ throughputWh: -1, usableWh: 14336 })).toThrow(RangeError);
		expect(() => equivalentFullCyclesChargeBasis(1, 1, 0)).toThrow(RangeError);
	});

	it('state of health by capacity: 252 Ah of 280 Ah = 90.0 %, fade 10.0 % (docs/references.md §2, calc)', () => {
		expect(capacityRetentionPct(252, 280)).toBeCloseTo(90.0, 10);
		expect(100 - capacityRetentionPct(252, 280)).toBeCloseTo(10.0, 10);
	});

	it('promised retention falls linearly from 100 % to the end retention at the rated cycles, then holds', () => {
		expect(promisedRetentionPct(80, 0, 20000)).toBe(100);
		expect(promisedRetentionPct(80, 10000, 20000)).toBe(90);
		expect(promisedRetentionPct(80, 20000, 20000)).toBe(80);
		expect(promisedRetentionPct(80, 30000, 20000)).toBe(80);
		// Derated at 40 °C, half the derated cycles also promise 90 %.
		const d = deratedCycles(terms, 40).cycles;
		expect(promisedRetentionPct(80, d / 2, d)).toBeCloseTo(90, 10);
	});
});

describe('warranty term', () => {
	it('runs for the warranty years from commissioning (date-fns addYears)', () => {
		expect(warrantyTermEnd('2020-03-01', 15)).toBe('2035-03-01');
	});

	it('leap-day commissioning 2024-02-29 + 10 years ends on 2034-02-28, as date-fns addYears gives', () => {
		expect(format(addYears(new Date(2024, 1, 29), 10), 'yyyy-MM-dd')).toBe('2034-02-28');
		expect(warrantyTermEnd('2024-02-29', 10)).toBe('2034-02-28');
		const leap = { ...terms, years: 10 };
		const onLastDay = assessClaim(
			claim({ terms: leap, commissionedOn: '2024-02-29', claimedOn: '2034-02-28' })
		);
		expect(onLastDay.withinTerm).toBe(true);
		expect(onLastDay.termEndsOn).toBe('2034-02-28');
		expect(onLastDay.yearsElapsed).toBe(10);
		const dayAfter = assessClaim(
			claim({ terms: leap, commissionedOn: '2024-02-29', claimedOn: '2034-03-01' })
		);
		expect(dayAfter.withinTerm).toBe(false);
		expect(dayAfter.recommendation).toBe('decline');
	});

	it('a claim on the last day of the term is within it; the next day is not', () => {
		expect(assessClaim(claim({ claimedOn: '2035-03-01' })).withinTerm).toBe(true);
		const late = assessClaim(claim({ claimedOn: '2035-03-02' }));
		expect(late.withinTerm).toBe(false);
		expect(late.reasons[0]).toBe(
			'The claim of 2035-03-02 is 15.00 years after commissioning on 2020-03-01, past the 15-year term that ended on 2035-03-01.'
		);
	});

	it('counts years as whole anniversaries plus the fraction of the year in progress', () => {
		expect(yearsBetween('2020-01-01', '2021-01-01')).toBe(1);
		expect(yearsBetween('2020-01-01', '2020-07-01')).toBeCloseTo(182 / 366, 12);
		expect(yearsBetween('2020-03-01', '2020-03-01')).toBe(0);
	});

	it('rejects dates that are not real calendar days', () => {
		expect(() => warrantyTermEnd('2023-02-29', 10)).toThrow(RangeError);
		expect(() => warrantyTermEnd('1/3/2020', 10)).toThrow(RangeError);
		expect(() => yearsBetween('2021-01-01', '2020-01-01')).toThrow(RangeError);
	});
});

describe('assessClaim', () => {
	it('covers a claim within term and cycles whose retention is below the promise', () => {
		const a = assessClaim(claim());
		expect(a.recommendation).toBe('cover');
		expect(a.withinTerm).toBe(true);
		expect(a.termEndsOn).toBe('2035-03-01');
		expect(a.equivalentFullCycles).toBe(9120);
		expect(a.cycleBasis).toBe('throughput');
		expect(a.deratedRatedCycles).toBe(20000);
		expect(a.activationEnergyKJPerMol).toBeCloseTo(43.641, 3);
		// 203.3 / 280 = 72.61 %; promised 100 − 20 × 9120/20000 = 90.88 %.
		expect(a.retentionPct).toBe(72.61);
		expect(a.promisedRetentionPct).toBe(90.88);
		expect(a.reasons).toContain(
			'Retention 72.61 % (203.3 Ah of 280.0 Ah) is below the 90.88 % promised at 9,120 equivalent full cycles.'
		);
		expect(a.reasons).toContain(
			'Discharge throughput of 130,744,320 Wh over 14,336 Wh usable gives 9,120 equivalent full cycles (energy basis).'
		);
		expect(a.reasons).toContain('9,120 equivalent full cycles are within the 20,000 rated cycles.');
		expect(a.reasons[0]).toBe(
			'The claim of 2024-06-10 is 4.28 years into the 15-year term from commissioning on 2020-03-01, which runs to 2035-03-01.'
		);
	});

	it('returns rounded numbers: 2 decimals for % and cycles, 3 for years', () => {
		const a = assessClaim(claim({ avgCellTempC: 40, throughputWh: 1234567 }));
		expect(a.yearsElapsed).toBe(Number(yearsBetween('2020-03-01', '2024-06-10').toFixed(3)));
		expect(a.equivalentFullCycles).toBe(86.12);
		expect(a.deratedRatedCycles).toBe(Math.round(deratedCycles(terms, 40).cycles * 100) / 100);
	});

	it('declines when retention is at or above the promise: SoH 252/280 = 90.0 % against 90.0 % promised at 10,000 EFC (docs/references.md §2)', () => {
		const a = assessClaim(claim({ measuredCapacityAh: 252, throughputWh: 10000 * usableWh }));
		expect(a.retentionPct).toBe(90);
		expect(a.promisedRetentionPct).toBe(90);
		expect(a.recommendation).toBe('decline');
		expect(a.reasons).toContain(
			'Retention 90.00 % (252.0 Ah of 280.0 Ah) is at or above the 90.00 % promised at 10,000 equivalent full cycles: the module performs as warranted.'
		);
	});

	it('declines past the derated cycles, even though the same cycles are within the rating at 25 °C', () => {
		const hot = assessClaim(claim({ throughputWh: 9000 * usableWh, avgCellTempC: 40 }));
		expect(hot.recommendation).toBe('decline');
		expect(hot.reasons).toContain(
			'9,000 equivalent full cycles exceed the 8,606 rated cycles, so the cycle warranty is used up.'
		);
		expect(
			assessClaim(claim({ throughputWh: 9000 * usableWh, avgCellTempC: 25 })).recommendation
		).toBe('cover');
	});

	it('exactly the rated cycles is still within them', () => {
		const a = assessClaim(claim({ throughputWh: 20000 * usableWh }));
		expect(a.promisedRetentionPct).toBe(80);
		expect(a.recommendation).toBe('cover');
		expect(assessClaim(claim({ throughputWh: 20001 * usableWh })).recommendation).toBe('decline');
	});

	it('declines past the term even when capacity is missing', () => {
		const a = assessClaim(claim({ claimedOn: '2036-01-01', measuredCapacityAh: undefined }));
		expect(a.recommendation).toBe('decline');
		expect(a.reasons).toContain('No measured capacity was given: ask for a capacity test report.');
	});

	it('asks for evidence when there is no commissioning date', () => {
		const a = assessClaim(claim({ commissionedOn: null }));
		expect(a.recommendation).toBe('need-evidence');
		expect(a.withinTerm).toBeNull();
		expect(a.yearsElapsed).toBeNull();
		expect(a.termEndsOn).toBeNull();
		expect(a.reasons[0]).toBe(
			'No commissioning date is on record, so the warranty term cannot be checked: ask for the commissioning record.'
		);
	});

	it('asks for evidence when the measured capacity is missing', () => {
		const a = assessClaim(claim({ measuredCapacityAh: undefined }));
		expect(a.recommendation).toBe('need-evidence');
		expect(a.retentionPct).toBeNull();
		expect(a.promisedRetentionPct).toBe(90.88);
	});

	it('asks for evidence when neither throughput nor cycles are given', () => {
		const a = assessClaim(claim({ throughputWh: undefined }));
		expect(a.recommendation).toBe('need-evidence');
		expect(a.equivalentFullCycles).toBeNull();
		expect(a.cycleBasis).toBeNull();
		expect(a.promisedRetentionPct).toBeNull();
		expect(a.reasons).toContain(
			'Neither energy throughput nor a cycle count was given: ask for the inverter log or the BMS cycle counter.'
		);
		expect(a.reasons).toContain(
			'Retention is 72.61 % (203.3 Ah of 280.0 Ah); without the cycles the promised retention cannot be set.'
		);
	});

	it('uses a cycle count when there is no throughput', () => {
		const a = assessClaim(claim({ throughputWh: undefined, cycles: 9120 }));
		expect(a.cycleBasis).toBe('count');
		expect(a.equivalentFullCycles).toBe(9120);
		expect(a.recommendation).toBe('cover');
		expect(a.reasons).toContain(
			'No energy throughput was given, so the reported count of 9,120 cycles is taken as equivalent full cycles.'
		);
	});

	it('prefers throughput over a cycle count and mentions the count', () => {
		const a = assessClaim(claim({ cycles: 25000 }));
		expect(a.cycleBasis).toBe('throughput');
		expect(a.equivalentFullCycles).toBe(9120);
		expect(a.recommendation).toBe('cover');
		expect(
			a.reasons.some((r) =>
				r.includes(
					'The reported count of 25,000 cycles was not used: the throughput takes precedence.'
				)
			)
		).toBe(true);
	});

	it('says when no temperature was given and then does not derate', () => {
		const a = assessClaim(claim({ avgCellTempC: undefined }));
		expect(a.deratedRatedCycles).toBe(20000);
		expect(a.reasons).toContain(
			'No average cell temperature was given, so the 20,000 cycles rated at 25 °C are used without derating.'
		);
	});

	it('lists events outside limits and an unproven stop-charge signal without changing the recommendation', () => {
		const base = assessClaim(claim());
		expect(base.reasons.some((r) => r.includes('stop-charge'))).toBe(false);
		for (const stopChargeProven of [false, undefined]) {
			const a = assessClaim(
				claim({
					stopChargeProven,
					eventsOutsideLimits: [
						'cell 3.0 V under-voltage on 2023-01-12',
						'pack 62 °C on 2023-07-02'
					]
				})
			);
			expect(a.recommendation).toBe(base.recommendation);
			expect(a.reasons).toContain(
				'The stop-charge signal was not proven at commissioning: weigh whether overcharge contributed.'
			);
			expect(a.reasons).toContain(
				'2 events outside the operating limits were reported (cell 3.0 V under-voltage on 2023-01-12; pack 62 °C on 2023-07-02): weigh whether they contributed.'
			);
		}
		const counted = assessClaim(claim({ eventsOutsideLimits: 1, measuredCapacityAh: 270 }));
		expect(counted.recommendation).toBe('decline');
		expect(counted.reasons).toContain(
			'1 event outside the operating limits was reported: weigh whether it contributed.'
		);
		expect(
			assessClaim(claim({ eventsOutsideLimits: 0 })).reasons.some((r) => r.includes('event'))
		).toBe(false);
	});

	it('compares at the stated precision: 259.1/280 = 92.5357… % reads 92.54 % and ties with 92.54 % promised at 7,460 EFC, so it declines (calc)', () => {
		const a = assessClaim(claim({ measuredCapacityAh: 259.1, throughputWh: 7460 * usableWh }));
		expect(a.retentionPct).toBe(92.54);
		expect(a.promisedRetentionPct).toBe(92.54);
		expect(a.recommendation).toBe('decline');
		expect(a.reasons).toContain(
			'Retention 92.54 % (259.1 Ah of 280.0 Ah) is at or above the 92.54 % promised at 7,460 equivalent full cycles: the module performs as warranted.'
		);
		// One hundredth lower (259.0 Ah = 92.50 %) is below and covered.
		const b = assessClaim(claim({ measuredCapacityAh: 259.0, throughputWh: 7460 * usableWh }));
		expect(b.recommendation).toBe('cover');
	});

	it('throws on a claim dated before commissioning', () => {
		expect(() => assessClaim(claim({ claimedOn: '2019-01-01' }))).toThrow(RangeError);
	});
});

describe('assessRequestSchema', () => {
	const body = {
		terms,
		commissionedOn: '2020-03-01',
		claimedOn: '2024-06-10',
		ratedCapacityAh: 280,
		measuredCapacityAh: 203.3,
		usableWh: 14336,
		throughputWh: 130744320,
		avgCellTempC: 31.5,
		stopChargeProven: false,
		eventsOutsideLimits: ['pack 62 °C']
	};
	const messages = (r: { success: boolean; error?: { issues: { message: string }[] } }) =>
		r.error?.issues.map((i) => i.message) ?? [];

	it('accepts a complete request, and one the domain then assesses', () => {
		const r = assessRequestSchema.safeParse(body);
		expect(r.success).toBe(true);
		if (r.success) expect(assessClaim(r.data).recommendation).toBe('cover');
		expect(
			assessRequestSchema.safeParse({
				...body,
				commissionedOn: null,
				measuredCapacityAh: undefined,
				throughputWh: undefined
			}).success
		).toBe(true);
		expect(assessRequestSchema.safeParse({ ...body, eventsOutsideLimits: 3 }).success).toBe(true);
	});

	it('rejects 400 °C with a clear message', () => {
		const r = assessRequestSchema.safeParse({ ...body, avgCellTempC: 400 });
		expect(r.success).toBe(false);
		expect(messages(r)).toContain('Average cell temperature must be between -40 and 120 °C.');
		expect(assessRequestSchema.safeParse({ ...body, avgCellTempC: -40 }).success).toBe(true);
		expect(assessRequestSchema.safeParse({ ...body, avgCellTempC: 120 }).success).toBe(true);
		expect(
			assessRequestSchema.safeParse({ ...body, terms: { ...terms, hotTempC: 121 } }).success
		).toBe(false);
	});

	it('rejects dates that are not real calendar days', () => {
		const r = assessRequestSchema.safeParse({ ...body, claimedOn: '2023-02-29' });
		expect(messages(r)).toContain(
			'Claim date: this date does not exist; give a real date, checking the month and day.'
		);
		expect(assessRequestSchema.safeParse({ ...body, commissionedOn: '2020-3-1' }).success).toBe(
			false
		);
		expect(assessRequestSchema.safeParse({ ...body, commissionedOn: '2024-02-29' }).success).toBe(
			true
		);
	});

	it('rejects a claim before commissioning; the same day is fine', () => {
		expect(messages(assessRequestSchema.safeParse({ ...body, claimedOn: '2020-02-29' }))).toContain(
			'The claim date must not be before the commissioning date.'
		);
		expect(assessRequestSchema.safeParse({ ...body, claimedOn: '2020-03-01' }).success).toBe(true);
	});

	it('rejects non-positive capacities and negative measurements, accepts a measured 0 Ah', () => {
		expect(assessRequestSchema.safeParse({ ...body, ratedCapacityAh: 0 }).success).toBe(false);
		expect(assessRequestSchema.safeParse({ ...body, usableWh: -1 }).success).toBe(false);
		expect(assessRequestSchema.safeParse({ ...body, measuredCapacityAh: -0.1 }).success).toBe(
			false
		);
		expect(assessRequestSchema.safeParse({ ...body, throughputWh: -5 }).success).toBe(false);
		expect(assessRequestSchema.safeParse({ ...body, measuredCapacityAh: 0 }).success).toBe(true);
	});

	it('checks the terms: end retention 1..100 %, hot point hotter and shorter-lived', () => {
		expect(
			assessRequestSchema.safeParse({ ...body, terms: { ...terms, endRetentionPct: 0 } }).success
		).toBe(false);
		expect(
			assessRequestSchema.safeParse({ ...body, terms: { ...terms, endRetentionPct: 101 } }).success
		).toBe(false);
		expect(
			assessRequestSchema.safeParse({ ...body, terms: { ...terms, endRetentionPct: 100 } }).success
		).toBe(true);
		expect(
			messages(assessRequestSchema.safeParse({ ...body, terms: { ...terms, hotTempC: 25 } }))
		).toContain('The hot temperature must be above the reference temperature.');
		expect(
			messages(
				assessRequestSchema.safeParse({ ...body, terms: { ...terms, hotRatedCycles: 20000 } })
			)
		).toContain(
			'The hot rated cycles must be fewer than the rated cycles at the reference temperature.'
		);
	});
});

describe('claimEvidenceSchema', () => {
	const form = {
		measuredCapacityAh: '203,3',
		measuredAtC: '25',
		throughputWh: '130744320',
		cycleCount: '',
		avgCellTempC: '31.5',
		maxCellTempC: '48',
		eventsOutsideLimits: '  ',
		description: 'Capacity fell quickly over the last winter.'
	};

	it('reads form strings: blanks are not given, a decimal comma is read', () => {
		const r = claimEvidenceSchema.safeParse(form);
		expect(r.success).toBe(true);
		if (r.success) {
			expect(r.data.measuredCapacityAh).toBe(203.3);
			expect(r.data.cycleCount).toBeUndefined();
			expect(r.data.eventsOutsideLimits).toBeUndefined();
		}
	});

	it('requires a fault description of 10 to 2000 characters', () => {
		expect(claimEvidenceSchema.safeParse({ ...form, description: 'broken' }).success).toBe(false);
		expect(claimEvidenceSchema.safeParse({ ...form, description: undefined }).success).toBe(false);
		expect(claimEvidenceSchema.safeParse({ ...form, description: 'x'.repeat(2001) }).success).toBe(
			false
		);
	});

	it('requires throughput or a cycle count', () => {
		const r = claimEvidenceSchema.safeParse({ ...form, throughputWh: '', cycleCount: '' });
		expect(r.success).toBe(false);
		expect(r.error?.issues.map((i) => i.message)).toContain(
			'Give the energy throughput (Wh) or the cycle count.'
		);
		expect(
			claimEvidenceSchema.safeParse({ ...form, throughputWh: '', cycleCount: '9120' }).success
		).toBe(true);
	});

	it('rejects 400 °C, non-numbers and a maximum below the average', () => {
		expect(
			claimEvidenceSchema
				.safeParse({ ...form, maxCellTempC: '400' })
				.error?.issues.map((i) => i.message)
		).toContain('Maximum cell temperature must be between -40 and 120 °C.');
		expect(claimEvidenceSchema.safeParse({ ...form, measuredCapacityAh: 'lots' }).success).toBe(
			false
		);
		expect(claimEvidenceSchema.safeParse({ ...form, maxCellTempC: '30' }).success).toBe(false);
	});
});
