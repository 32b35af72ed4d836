/**
 * The assessment on its edges: exact ties of retention and promise, the mean kinetic
 * temperature of a logged profile, and a capacity test away from the reference temperature.
 * Expected values are recomputed here from the published formulas, not by the code under test.
 */
import { describe, expect, it } from 'vitest';
import {
	assessClaim,
	meanKineticTempC,
	timeWeightedMeanC,
	type ClaimInput
} from '../../src/lib/domain/warranty';
import { temperatureProfileOf, summariseLog } from '../../src/lib/domain/inverter-log';
import { assessRequestSchema } from '../../src/lib/schemas/warranty-assess';
import type { WarrantyTerms } from '../../src/lib/domain/model';

// Invented TC-HC terms (demo numbers, not a datasheet).
const terms: WarrantyTerms = {
	years: 15,
	ratedCycles: 20000,
	endRetentionPct: 80,
	referenceTempC: 25,
	hotTempC: 55,
	hotRatedCycles: 4000
};
const base = (over: Partial<ClaimInput> = {}): ClaimInput => ({
	terms,
	commissionedOn: '2020-03-01',
	claimedOn: '2024-06-10',
	ratedCapacityAh: 280,
	measuredCapacityAh: 200,
	usableWh: 14336,
	cycles: 5000,
	stopChargeProven: true,
	...over
});

// Independent recomputation (written out here, not imported): R from CODATA 2018.
const R = 8.314462618;
const K = (c: number) => c + 273.15;
const eaFit = (t1: number, n1: number, t2: number, n2: number) =>
	(R * Math.log(n1 / n2)) / (1 / K(t1) - 1 / K(t2));
const mkt = (spans: [number, number][], ea: number) => {
	const tot = spans.reduce((a, [, h]) => a + h, 0);
	const s = spans.reduce((a, [c, h]) => a + h * Math.exp(-ea / (R * K(c))), 0) / tot;
	return ea / R / -Math.log(s) - 273.15;
};

/** The two numbers a retention sentence prints, as numbers. */
const sentenceNumbers = (reasons: string[]) => {
	const s = reasons.find((r) => r.startsWith('Retention '))!;
	const m = /^Retention ([\d.]+) % .* the ([\d.]+) % promised/.exec(s)!;
	return { sentence: s, r: Number(m[1]), p: Number(m[2]) };
};

describe('exact ties: at or above the promise declines (stated precision: 0.01 percentage point)', () => {
	it('256.2 Ah of 280 Ah is exactly 91.50 % and ties with a promised 91.5 %: declined, and the sentence agrees (calc)', () => {
		// In binary floating point 256.2 / 280 × 100 is 91.49999999999999.
		expect((256.2 / 280) * 100).toBeLessThan(91.5);
		// Promise 91.5 % exactly: end retention 91.5 % reached at the rated cycles.
		const a = assessClaim(
			base({
				terms: { ...terms, endRetentionPct: 91.5 },
				measuredCapacityAh: 256.2,
				cycles: 20000
			})
		);
		expect(a.retentionPct).toBe(91.5);
		expect(a.promisedRetentionPct).toBe(91.5);
		expect(a.recommendation).toBe('decline');
		expect(a.reasons).toContain(
			'Retention 91.50 % (256.2 Ah of 280.0 Ah) is at or above the 91.50 % promised at 20,000 equivalent full cycles: the module performs as warranted.'
		);
		expect(a.retentionPrecisionPct).toBe(0.01);
	});

	it('sweeps 3,360 exact ties over twelve rated capacities and two kinds of promise: every one declines with an "at or above" sentence (calc)', () => {
		let ties = 0;
		let floatWouldCover = 0;
		// Ties built in integers: retention j/4 % needs measured = rated × j / 400 Ah exactly.
		for (const rated of [280, 170, 100, 56, 230, 48, 120, 305, 90, 150, 200, 62]) {
			for (let j = 200; j < 400; j++) {
				const retentionHundredths = j * 25; // j/4 % in hundredths
				const measured = (rated * j) / 400;
				// Promise equal to it: (a) end retention at the rated cycles; (b) linear part of the
				// promise: 100 − 20 × efc/20000 = retention → efc = (100 − retention) × 1000.
				const cases: Partial<ClaimInput>[] = [
					{ terms: { ...terms, endRetentionPct: retentionHundredths / 100 }, cycles: 20000 }
				];
				if (retentionHundredths >= 8000)
					cases.push({ cycles: ((10000 - retentionHundredths) * 1000) / 100 });
				for (const c of cases) {
					const a = assessClaim(
						base({ ratedCapacityAh: rated, measuredCapacityAh: measured, ...c })
					);
					ties++;
					if ((measured / rated) * 100 < retentionHundredths / 100) floatWouldCover++;
					expect(a.retentionPct).toBe(retentionHundredths / 100);
					expect(a.promisedRetentionPct).toBe(retentionHundredths / 100);
					expect(a.recommendation).toBe('decline');
					const { sentence, r, p } = sentenceNumbers(a.reasons);
					expect(sentence).toContain('is at or above');
					expect(r).toBe(p);
				}
			}
		}
		expect(ties).toBe(3360);
		// The sweep has teeth: a plain floating-point comparison would have covered some ties.
		expect(floatWouldCover).toBeGreaterThan(0);
	});

	it('one hundredth below the promise covers, and the sentence says below with smaller retention', () => {
		for (const [measured, rated, promise] of [
			[256.17, 280, 91.5], // 91.4893 % → 91.49
			[169.99, 170, 99.99], // 99.9941 % → 99.99 ties; 169.98 → 99.99 too (ties)
			[55.99, 56, 99.99]
		] as const) {
			const a = assessClaim(
				base({
					terms: { ...terms, endRetentionPct: promise },
					ratedCapacityAh: rated,
					measuredCapacityAh: measured,
					cycles: 20000
				})
			);
			const exact = Math.round(((measured * 100) / rated) * 100); // independent hundredths
			const promisedH = Math.round(promise * 100);
			expect(a.recommendation).toBe(exact >= promisedH ? 'decline' : 'cover');
			const { sentence, r, p } = sentenceNumbers(a.reasons);
			if (exact < promisedH) {
				expect(sentence).toContain('is below');
				expect(r).toBeLessThan(p);
			} else expect(r).toBeGreaterThanOrEqual(p);
		}
	});

	it('rounds half away from zero in decimal: 91.495 % reads 91.50 % (ties a 91.5 % promise), 91.4949 % reads 91.49 %', () => {
		// 182.99 / 200 = 91.495 % exactly.
		const tie = assessClaim(
			base({
				terms: { ...terms, endRetentionPct: 91.5 },
				ratedCapacityAh: 200,
				measuredCapacityAh: 182.99,
				cycles: 20000
			})
		);
		expect(tie.retentionPct).toBe(91.5);
		expect(tie.recommendation).toBe('decline');
		const below = assessClaim(
			base({
				terms: { ...terms, endRetentionPct: 91.5 },
				ratedCapacityAh: 2000,
				measuredCapacityAh: 1829.898,
				cycles: 20000
			})
		);
		expect(below.retentionPct).toBe(91.49);
		expect(below.recommendation).toBe('cover');
	});
});

describe('mean kinetic temperature (Haynes 1971; USP ⟨1160⟩)', () => {
	it('published example (zelti/mkt README, ΔH 83.14472 kJ/mol): readings 2, 2, 5, 8, 8, 8, 8 °C at equal intervals give 6.25 °C (pub)', () => {
		const spans = [2, 2, 5, 8, 8, 8, 8].map((tempC) => ({ tempC, hours: 1 }));
		expect(meanKineticTempC(spans, 83144.72)).toBeCloseTo(6.25, 2);
	});

	it('half the time at 15 °C and half at 45 °C with the terms’ Ea 43.64 kJ/mol: ≈ 35.13 °C, recomputed here (calc)', () => {
		const ea = eaFit(25, 20000, 55, 4000);
		expect(ea / 1000).toBeCloseTo(43.64, 2);
		const expected = mkt(
			[
				[15, 500],
				[45, 500]
			],
			ea
		);
		expect(expected).toBeCloseTo(35.13, 2);
		const got = meanKineticTempC(
			[
				{ tempC: 15, hours: 500 },
				{ tempC: 45, hours: 500 }
			],
			ea
		);
		expect(got).toBeCloseTo(expected, 9);
		expect(
			timeWeightedMeanC([
				{ tempC: 15, hours: 500 },
				{ tempC: 45, hours: 500 }
			])
		).toBe(30);
	});

	it('is the time-weighted form: 3 h at 20 °C and 1 h at 40 °C equal the four readings 20, 20, 20, 40 (calc)', () => {
		const ea = 60000;
		const a = meanKineticTempC(
			[
				{ tempC: 20, hours: 3 },
				{ tempC: 40, hours: 1 }
			],
			ea
		);
		const b = meanKineticTempC(
			[20, 20, 20, 40].map((tempC) => ({ tempC, hours: 1 })),
			ea
		);
		expect(a).toBeCloseTo(b, 10);
		expect(a).toBeCloseTo(
			mkt(
				[
					[20, 3],
					[40, 1]
				],
				ea
			),
			9
		);
	});

	it('a constant profile gives its temperature; MKT is never below the plain mean (calc)', () => {
		expect(meanKineticTempC([{ tempC: 31.7, hours: 10 }], 43640)).toBeCloseTo(31.7, 9);
		const p = [-10, 0, 12, 25, 38, 51].map((tempC, i) => ({ tempC, hours: i + 1 }));
		expect(meanKineticTempC(p, 43640)).toBeGreaterThan(timeWeightedMeanC(p));
	});

	it('refuses an empty profile or one with no time', () => {
		expect(() => meanKineticTempC([], 43640)).toThrow(RangeError);
		expect(() => meanKineticTempC([{ tempC: 20, hours: 0 }], 43640)).toThrow(/no time/);
		expect(() => meanKineticTempC([{ tempC: 20, hours: -1 }], 43640)).toThrow(RangeError);
	});

	it('derates 20,000 rated cycles to ≈ 11,213 for the 15/45 °C profile, where the plain mean 30 °C would give ≈ 14,960 (calc)', () => {
		const ea = eaFit(25, 20000, 55, 4000);
		const af = (c: number) => Math.exp((ea / R) * (1 / K(25) - 1 / K(c)));
		const expectedMkt =
			20000 /
			af(
				mkt(
					[
						[15, 1],
						[45, 1]
					],
					ea
				)
			);
		const expectedMean = 20000 / af(30);
		expect(expectedMkt).toBeCloseTo(11213, -1);
		expect(expectedMean).toBeCloseTo(14960, -1);

		const profile = [
			{ tempC: 15, hours: 4380 },
			{ tempC: 45, hours: 4380 }
		];
		const a = assessClaim(base({ temperatureProfile: profile, avgCellTempC: 30 }));
		expect(a.temperatureBasis).toBe('profile');
		expect(a.effectiveCellTempC).toBeCloseTo(35.13, 2);
		expect(a.deratedRatedCycles).toBeCloseTo(expectedMkt, 1);
		expect(a.reasons.some((r) => r.includes('mean kinetic temperature'))).toBe(true);
		expect(a.reasons.some((r) => r.includes('The typed average of 30 °C was not used'))).toBe(true);

		const plain = assessClaim(base({ avgCellTempC: 30 }));
		expect(plain.temperatureBasis).toBe('average');
		expect(plain.deratedRatedCycles).toBeCloseTo(expectedMean, 1);
	});

	it('the API schema accepts temperatureProfile, refuses an oversized or timeless one', () => {
		const req = {
			terms,
			commissionedOn: '2020-03-01',
			claimedOn: '2024-06-10',
			ratedCapacityAh: 280,
			usableWh: 14336,
			temperatureProfile: [{ tempC: 20, hours: 5 }]
		};
		expect(assessRequestSchema.safeParse(req).success).toBe(true);
		const none = assessRequestSchema.safeParse({
			...req,
			temperatureProfile: [{ tempC: 20, hours: 0 }]
		});
		expect(none.success).toBe(false);
		const big = assessRequestSchema.safeParse({
			...req,
			temperatureProfile: Array.from({ length: 100_001 }, () => ({ tempC: 20, hours: 1 }))
		});
		expect(big.success).toBe(false);
		if (!big.success) expect(big.error.issues[0].message).toMatch(/at most 100,000 spans/);
	});
});

describe('the inverter log as a time-weighted profile', () => {
	it('each reading holds until the next; the last gets the usual interval; long gaps count one interval', () => {
		const h = 3_600_000;
		const { profile, gaps } = temperatureProfileOf([
			{ at: 0, tempC: 20 },
			{ at: h, tempC: 30 },
			{ at: 2 * h, tempC: 20 },
			{ at: 100 * h, tempC: 30 } // 98 h gap after the 20 °C reading
		]);
		expect(gaps).toBe(1);
		expect(profile).toEqual([
			{ tempC: 20, hours: 2 },
			{ tempC: 30, hours: 2 }
		]);
	});

	it('summariseLog returns the profile for ISO timestamps; unequal intervals change MKT but not the plain mean', () => {
		const csv = [
			'timestamp,discharge_total_kwh,cell_temp_c',
			'2024-01-01 00:00,100,15',
			'2024-01-01 03:00,101,45',
			'2024-01-01 04:00,102,15',
			'2024-01-01 07:00,103,45'
		].join('\n');
		const s = summariseLog(csv, {
			timestampColumn: 'timestamp',
			energyColumn: 'discharge_total_kwh',
			energyUnit: 'kWh',
			energyKind: 'cumulative',
			tempColumn: 'cell_temp_c'
		});
		expect(s.avgTempC).toBe(30);
		// Intervals 3, 1, 3 h (usual: the median, 3 h): 15 °C for 3 + 3 h, 45 °C for 1 h + the last reading's 3 h.
		const hoursAt = Object.fromEntries(s.temperatureProfile.map((p) => [p.tempC, p.hours]));
		expect(hoursAt[15]).toBe(6);
		expect(hoursAt[45]).toBe(1 + 3);
	});

	it('does not weight by time when the timestamps are not ISO 8601, and says so', () => {
		const csv = ['time,e_kwh,cell_temp', '01/02/2024 10:00,1,20', '01/02/2024 11:00,2,30'].join(
			'\n'
		);
		const s = summariseLog(csv, {
			timestampColumn: 'time',
			energyColumn: 'e_kwh',
			energyUnit: 'kWh',
			energyKind: 'cumulative',
			tempColumn: 'cell_temp'
		});
		expect(s.temperatureProfile).toEqual([]);
		expect(s.problems.some((p) => p.includes('cannot be weighted by time'))).toBe(true);
	});
});

describe('capacity measured away from the reference temperature (IEC 61960-3: 20 ± 5 °C, from memory)', () => {
	const reasonsAt = (measuredAtC: number | null) =>
		assessClaim(base({ measuredCapacityAh: 200, measuredAtC })).reasons;

	it('names a test below the band and asks for one at reference temperature; the recommendation is unchanged', () => {
		const r = reasonsAt(8);
		expect(r.some((s) => s.includes('measured at 8 °C, below the 20 ± 5 °C reference band'))).toBe(
			true
		);
		expect(r.some((s) => s.includes('Ask for a capacity test at 15–25 °C'))).toBe(true);
		expect(assessClaim(base({ measuredAtC: 8 })).recommendation).toBe(
			assessClaim(base({ measuredAtC: 20 })).recommendation
		);
	});

	it('band edges: 15 °C and 25 °C are within, 14.9 °C below, 25.1 °C above', () => {
		expect(reasonsAt(15).some((s) => s.includes('within the 20 ± 5 °C'))).toBe(true);
		expect(reasonsAt(25).some((s) => s.includes('within the 20 ± 5 °C'))).toBe(true);
		expect(reasonsAt(14.9).some((s) => s.includes('below the 20 ± 5 °C'))).toBe(true);
		expect(reasonsAt(25.1).some((s) => s.includes('above the 20 ± 5 °C'))).toBe(true);
		expect(reasonsAt(null).some((s) => s.includes("test's temperature was not given"))).toBe(true);
	});

	it('reports the test uncertainty (default 1 % of the reading) when retention is within it of the promise', () => {
		// 5 000 cycles → promised 95.00 %; 264.6/280 = 94.50 %: 0.50 points apart, margin 0.95 points.
		const a = assessClaim(base({ measuredCapacityAh: 264.6 }));
		expect(a.promisedRetentionPct).toBe(95);
		expect(a.retentionPct).toBe(94.5);
		expect(a.measurementMarginPct).toBe(0.95); // 0.945 rounds half away from zero
		expect(a.recommendation).toBe('cover');
		expect(a.reasons.some((s) => s.includes('within the ±0.95 points'))).toBe(true);
		// With a 0.2 % uncertainty the margin is 0.19 points and no sentence appears.
		const tight = assessClaim(base({ measuredCapacityAh: 264.6, capacityUncertaintyPct: 0.2 }));
		expect(tight.measurementMarginPct).toBe(0.19);
		expect(tight.reasons.some((s) => s.includes('can be trusted to'))).toBe(false);
	});
});
