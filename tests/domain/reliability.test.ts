/**
 * Fleet reliability against sources outside the project: published Poisson limits and an
 * independent chi-square quantile (@stdlib), the Weibull MLE on published data sets and
 * against an independent likelihood (@stdlib Weibull logpdf and CDF) maximised by a shrinking
 * grid search, and the reserve against an independent recomputation.
 */
import { describe, expect, it } from 'vitest';
import chisqQuantile from '@stdlib/stats-base-dists-chisquare-quantile';
import weibullLogpdf from '@stdlib/stats-base-dists-weibull-logpdf';
import weibullCdfLib from '@stdlib/stats-base-dists-weibull-cdf';
import {
	claimRate,
	fitWeibull,
	poissonInterval,
	probabilityPlotPoints,
	projectClaims,
	readShape,
	sliceFleet,
	summariseFleet,
	type ServiceRecord,
	type WeibullFit
} from '../../src/lib/domain/reliability';

/** Independent log-likelihood: @stdlib's logpdf for failures, ln(1 − CDF) for censored units. */
const independentLogLik = (times: number[], cens: boolean[], beta: number, eta: number) =>
	times.reduce(
		(a, t, i) =>
			a + (cens[i] ? Math.log1p(-weibullCdfLib(t, beta, eta)) : weibullLogpdf(t, beta, eta)),
		0
	);
/**
 * Maximises it over (ln β, ln η) by brute force: a 41 × 41 grid over ln β ∈ [−3, 3] and
 * ln η from the smallest time to 20× the largest, shrunk fourfold around the best point 14
 * times (no derivatives, no profile equation: nothing shared with the code under test).
 */
const independentFit = (times: number[], cens: boolean[]) => {
	let [b0, b1] = [-3, 3];
	let [e0, e1] = [Math.log(Math.min(...times)), Math.log(20 * Math.max(...times))];
	let best = { lb: 0, le: 0, ll: -Infinity };
	for (let round = 0; round < 14; round++) {
		for (let i = 0; i <= 40; i++)
			for (let j = 0; j <= 40; j++) {
				const lb = b0 + ((b1 - b0) * i) / 40;
				const le = e0 + ((e1 - e0) * j) / 40;
				const ll = independentLogLik(times, cens, Math.exp(lb), Math.exp(le));
				if (ll > best.ll) best = { lb, le, ll };
			}
		const [wb, we] = [(b1 - b0) / 8, (e1 - e0) / 8];
		[b0, b1, e0, e1] = [best.lb - wb, best.lb + wb, best.le - we, best.le + we];
	}
	return { beta: Math.exp(best.lb), eta: Math.exp(best.le), logLik: best.ll };
};
const ok = (o: ReturnType<typeof fitWeibull>): WeibullFit => {
	if (!o.ok) throw new Error(o.reason);
	return o;
};

describe('exact Poisson interval (Garwood 1936)', () => {
	it('k = 0: [0, 3.689] (epitools pois.exact documentation; calculatorhub Poisson interval page) (pub)', () => {
		const [lo, hi] = poissonInterval(0);
		expect(lo).toBe(0);
		expect(hi).toBeCloseTo(3.689, 3);
		expect(hi).toBeCloseTo(chisqQuantile(0.975, 2) / 2, 9);
	});

	it('k = 10: [4.80, 18.39] (calculatorhub; Statpages, as quoted on Cross Validated) (pub)', () => {
		const [lo, hi] = poissonInterval(10);
		expect(lo).toBeCloseTo(4.8, 2);
		expect(hi).toBeCloseTo(18.39, 2);
	});

	it('k = 4: [1.0899, 10.2416], recomputed with @stdlib chi-square quantiles (calc)', () => {
		const [lo, hi] = poissonInterval(4);
		expect(lo).toBeCloseTo(chisqQuantile(0.025, 8) / 2, 8);
		expect(hi).toBeCloseTo(chisqQuantile(0.975, 10) / 2, 8);
		expect(lo).toBeCloseTo(1.0899, 4);
		expect(hi).toBeCloseTo(10.2416, 4);
	});

	it('agrees with @stdlib for counts 0 … 200 (calc)', () => {
		for (let k = 0; k <= 200; k++) {
			const [lo, hi] = poissonInterval(k);
			if (k > 0) expect(lo / (chisqQuantile(0.025, 2 * k) / 2)).toBeCloseTo(1, 9);
			expect(hi / (chisqQuantile(0.975, 2 * k + 2) / 2)).toBeCloseTo(1, 9);
		}
	});

	it('k = 10 000 agrees with the Wilson–Hilferty (1931) approximation to 1e-5 (calc; @stdlib is 1.6e-5 off at 20 002 degrees of freedom)', () => {
		const wh = (p: number, df: number, z: number) =>
			df * Math.pow(1 - 2 / (9 * df) + z * Math.sqrt(2 / (9 * df)), 3);
		const z = 1.959963984540054;
		const [lo, hi] = poissonInterval(10_000);
		expect(lo / (wh(0.025, 20_000, -z) / 2)).toBeCloseTo(1, 5);
		expect(hi / (wh(0.975, 20_002, z) / 2)).toBeCloseTo(1, 5);
	});

	it('rate per 1 000 unit-years divides count and interval by the exposure', () => {
		const r = claimRate(4, 250);
		expect(r.ratePer1000).toBeCloseTo(16, 10);
		expect(r.ci95[0]).toBeCloseTo((1.0899 / 250) * 1000, 2);
		expect(r.ci95[1]).toBeCloseTo((10.2416 / 250) * 1000, 2);
	});

	it('refuses a fractional or negative count, zero exposure, and counts past the bound', () => {
		expect(() => poissonInterval(1.5)).toThrow(/whole number/);
		expect(() => poissonInterval(-1)).toThrow(RangeError);
		expect(() => claimRate(1, 0)).toThrow(/exposure/);
		expect(() => poissonInterval(10_000_001)).toThrow(/At most/);
	});
});

// Lieblein & Zelen (1956) ball-bearing endurance, millions of revolutions, 23 failures
// (data and the MLE β ≈ 2.10, η ≈ 81.9 from memory).
const BEARINGS = [
	17.88, 28.92, 33.0, 41.52, 42.12, 45.6, 48.48, 51.84, 51.96, 54.12, 55.56, 67.8, 68.64, 68.64,
	68.88, 84.12, 93.12, 98.64, 105.12, 105.84, 127.92, 128.04, 173.4
];

// Nelson (1982, p. 318) diesel engine fans as printed in the SAS/QC RELIABILITY procedure's
// "Analysis of Right-Censored Data from a Single Population" (pub): hours, 1 = censored.
const FANS: [number, 0 | 1][] = [
	[450, 0],
	[460, 1],
	[1150, 0],
	[1150, 0],
	[1560, 1],
	[1600, 0],
	[1660, 1],
	[1850, 1],
	[1850, 1],
	[1850, 1],
	[1850, 1],
	[1850, 1],
	[2030, 1],
	[2030, 1],
	[2030, 1],
	[2070, 0],
	[2070, 0],
	[2080, 0],
	[2200, 1],
	[3000, 1],
	[3000, 1],
	[3000, 1],
	[3000, 1],
	[3100, 0],
	[3200, 1],
	[3450, 0],
	[3750, 1],
	[3750, 1],
	[4150, 1],
	[4150, 1],
	[4150, 1],
	[4150, 1],
	[4300, 1],
	[4300, 1],
	[4300, 1],
	[4300, 1],
	[4600, 0],
	[4850, 1],
	[4850, 1],
	[4850, 1],
	[4850, 1],
	[5000, 1],
	[5000, 1],
	[5000, 1],
	[6100, 1],
	[6100, 0],
	[6100, 1],
	[6100, 1],
	[6300, 1],
	[6450, 1],
	[6450, 1],
	[6700, 1],
	[7450, 1],
	[7800, 1],
	[7800, 1],
	[8100, 1],
	[8100, 1],
	[8200, 1],
	[8500, 1],
	[8500, 1],
	[8500, 1],
	[8750, 1],
	[8750, 0],
	[8750, 1],
	[9400, 1],
	[9900, 1],
	[10100, 1],
	[10100, 1],
	[10100, 1],
	[11500, 1]
];

// Uncensored sample with published MLE and 95 % bounds: Altair Compose/Activate `wblfit`
// documentation example (pub): a = 10.411, b = 1.7397, a in [7.974, 13.594], b in [1.2667, 2.3893].
const WBLFIT = [
	13.22, 9.41, 8.58, 7.98, 4.12, 16.1, 5.62, 2.28, 9.69, 28.2, 13.84, 5.62, 5.26, 6.91, 8.92, 9.07,
	9.83, 1.86, 12.66, 5.44
];

describe('Weibull maximum likelihood with right-censoring', () => {
	it('Lieblein & Zelen ball bearings, uncensored: β ≈ 2.10, η ≈ 81.9 (from memory), and the independent optimiser agrees', () => {
		const cens = BEARINGS.map(() => false);
		const fit = ok(fitWeibull(BEARINGS, cens));
		expect(fit.beta).toBeCloseTo(2.1, 1);
		expect(fit.eta).toBeCloseTo(81.9, 0);
		const ind = independentFit(BEARINGS, cens);
		expect(fit.beta).toBeCloseTo(ind.beta, 4);
		expect(fit.eta).toBeCloseTo(ind.eta, 2);
		expect(fit.logLikelihood).toBeCloseTo(independentLogLik(BEARINGS, cens, fit.beta, fit.eta), 8);
		expect(fit.logLikelihood).toBeGreaterThanOrEqual(ind.logLik - 1e-9);
	});

	it('engine fans (Nelson 1982 via SAS/QC, 12 failures, 58 censored): β ≈ 1.058, η ≈ 26.30 thousand hours (estimates from memory; data pub); the independent optimiser agrees', () => {
		const times = FANS.map(([t]) => t / 1000);
		const cens = FANS.map(([, c]) => c === 1);
		const fit = ok(fitWeibull(times, cens));
		expect(fit.failures).toBe(12);
		expect(fit.censored).toBe(58);
		const ind = independentFit(times, cens);
		expect(fit.beta).toBeCloseTo(ind.beta, 4);
		expect(fit.eta).toBeCloseTo(ind.eta, 2);
		expect(fit.beta).toBeCloseTo(1.058, 2);
		expect(fit.eta).toBeCloseTo(26.3, 0);
	});

	it('Altair wblfit example: a = 10.411, b = 1.7397 and its 95 % bounds (pub; our bounds are log-scale Fisher bounds, within 2 % of theirs)', () => {
		const fit = ok(
			fitWeibull(
				WBLFIT,
				WBLFIT.map(() => false)
			)
		);
		expect(fit.eta).toBeCloseTo(10.411, 3);
		expect(fit.beta).toBeCloseTo(1.7397, 3);
		expect(fit.etaCI95[0] / 7.974).toBeCloseTo(1, 1);
		expect(fit.etaCI95[1] / 13.594).toBeCloseTo(1, 1);
		expect(fit.betaCI95[0] / 1.2667).toBeCloseTo(1, 1);
		expect(fit.betaCI95[1] / 2.3893).toBeCloseTo(1, 1);
	});

	it('bounds come from the observed information: a numerical Hessian of the independent likelihood gives the same se(ln β), se(ln η) (calc)', () => {
		const times = FANS.map(([t]) => t / 1000);
		const cens = FANS.map(([, c]) => c === 1);
		const fit = ok(fitWeibull(times, cens));
		const f = (lb: number, le: number) =>
			independentLogLik(times, cens, Math.exp(lb), Math.exp(le));
		const [b0, e0] = [Math.log(fit.beta), Math.log(fit.eta)];
		const h = 1e-4;
		const hbb = (f(b0 + h, e0) - 2 * f(b0, e0) + f(b0 - h, e0)) / (h * h);
		const hee = (f(b0, e0 + h) - 2 * f(b0, e0) + f(b0, e0 - h)) / (h * h);
		const hbe =
			(f(b0 + h, e0 + h) - f(b0 + h, e0 - h) - f(b0 - h, e0 + h) + f(b0 - h, e0 - h)) / (4 * h * h);
		const det = hbb * hee - hbe * hbe;
		const varLb = -hee / det;
		const varLe = -hbb / det;
		expect(fit.cov.lnBeta / varLb).toBeCloseTo(1, 3);
		expect(fit.cov.lnEta / varLe).toBeCloseTo(1, 3);
		const z = 1.959963984540054;
		expect(fit.betaCI95[0]).toBeCloseTo(fit.beta * Math.exp(-z * Math.sqrt(varLb)), 3);
		expect(fit.etaCI95[1]).toBeCloseTo(fit.eta * Math.exp(z * Math.sqrt(varLe)), 1);
	});

	it('scale does not matter: times in hours and in thousands of hours give the same β and η × 1000', () => {
		const cens = FANS.map(([, c]) => c === 1);
		const a = ok(
			fitWeibull(
				FANS.map(([t]) => t / 1000),
				cens
			)
		);
		const b = ok(
			fitWeibull(
				FANS.map(([t]) => t),
				cens
			)
		);
		expect(b.beta).toBeCloseTo(a.beta, 9);
		expect(b.eta / 1000).toBeCloseTo(a.eta, 6);
	});

	it('refuses fewer than two failures, and says why', () => {
		const one = fitWeibull([1, 2, 3], [false, true, true]);
		expect(one.ok).toBe(false);
		if (!one.ok) {
			expect(one.reason).toMatch(/at least two failures; there is 1 failure among 3 units/);
			expect(one.failures).toBe(1);
			expect(one.censored).toBe(2);
		}
		const none = fitWeibull([1, 2], [true, true]);
		expect(none.ok).toBe(false);
	});

	it('refuses failures that all sit at the longest time (no maximum exists)', () => {
		const r = fitWeibull([1, 1, 5, 5], [true, true, false, false]);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.reason).toMatch(/longest time/);
		// …but equal failure times before a longer censored time do fit.
		expect(fitWeibull([2, 2, 9], [false, false, true]).ok).toBe(true);
	});

	it('rejects malformed input with a message naming the entry', () => {
		expect(() => fitWeibull([1, 2], [false])).toThrow(/one flag per time/);
		expect(() => fitWeibull([1, 0], [false, false])).toThrow(
			/times\[1\] must be a positive number/
		);
		expect(() => fitWeibull([1, NaN], [false, false])).toThrow(/times\[1\]/);
		expect(() =>
			fitWeibull(
				Array.from({ length: 100_001 }, () => 1),
				Array.from({ length: 100_001 }, () => false)
			)
		).toThrow(/At most 100,000/);
	});

	it('reads β from its interval: early failures, random, wear-out', () => {
		expect(readShape({ beta: 0.6, betaCI95: [0.4, 0.9] }).kind).toBe('early');
		expect(readShape({ beta: 1.1, betaCI95: [0.8, 1.5] }).kind).toBe('random');
		expect(readShape({ beta: 2.1, betaCI95: [1.5, 2.9] }).kind).toBe('wear-out');
		expect(readShape({ beta: 2.1, betaCI95: [1.5, 2.9] }).sentence).toContain('wear-out');
	});
});

describe('probability plot positions', () => {
	it('uncensored: Benard’s median ranks (i − 0.3)/(n + 0.4) (Benard 1953, from memory)', () => {
		const pts = probabilityPlotPoints([5, 1, 3], [false, false, false]);
		expect(pts.map((p) => p.time)).toEqual([1, 3, 5]);
		pts.forEach((p, i) => expect(p.fraction).toBeCloseTo((i + 1 - 0.3) / 3.4, 12));
	});

	it('censored: Johnson’s adjusted ranks, worked by hand for 5 units with one suspension at t = 2 (calc)', () => {
		// Sorted: 1 F, 2 S, 3 F, 4 F, 5 S. Orders: 1; then (6 − 1)/(1 + 3) = 1.25 → 2.25;
		// then (6 − 2.25)/(1 + 2) = 1.25 → 3.5.
		const pts = probabilityPlotPoints([3, 1, 5, 2, 4], [false, false, true, true, false]);
		expect(pts.map((p) => p.time)).toEqual([1, 3, 4]);
		expect(pts[0].fraction).toBeCloseTo(0.7 / 5.4, 12);
		expect(pts[1].fraction).toBeCloseTo(1.95 / 5.4, 12);
		expect(pts[2].fraction).toBeCloseTo(3.2 / 5.4, 12);
	});
});

describe('claims still to come', () => {
	const fit = ok(
		fitWeibull(
			BEARINGS,
			BEARINGS.map(() => false)
		)
	);
	const F = (t: number) => weibullCdfLib(t, fit.beta, fit.eta);

	it('expected claims = Σ [F(t + h) − F(t)] / [1 − F(t)], recomputed with @stdlib’s CDF; h is cut at the warranty end (calc)', () => {
		const units = [
			{ ageYears: 0, remainingYears: 50 },
			{ ageYears: 20, remainingYears: 5 },
			{ ageYears: 60, remainingYears: 100 },
			{ ageYears: 30, remainingYears: 0 }
		];
		const h = 10;
		const expected = units.reduce((a, u) => {
			const hh = Math.min(h, u.remainingYears);
			return a + (F(u.ageYears + hh) - F(u.ageYears)) / (1 - F(u.ageYears));
		}, 0);
		const p = projectClaims(units, fit, h);
		expect(p.expected).toBeCloseTo(expected, 10);
		const toEnd = units.reduce(
			(a, u) => a + (F(u.ageYears + u.remainingYears) - F(u.ageYears)) / (1 - F(u.ageYears)),
			0
		);
		expect(projectClaims(units, fit, null).expected).toBeCloseTo(toEnd, 10);
	});

	it('the interval adds Σ p(1 − p) and the delta-method parameter variance, checked by finite differences (calc)', () => {
		const units = Array.from({ length: 40 }, (_, i) => ({ ageYears: i * 2, remainingYears: 15 }));
		const pOf = (beta: number, eta: number) =>
			units.map((u) => {
				const Fb = (t: number) => weibullCdfLib(t, beta, eta);
				return (Fb(u.ageYears + 15) - Fb(u.ageYears)) / (1 - Fb(u.ageYears));
			});
		const E = (lb: number, le: number) =>
			pOf(Math.exp(lb), Math.exp(le)).reduce((a, x) => a + x, 0);
		const [b0, e0] = [Math.log(fit.beta), Math.log(fit.eta)];
		const d = 1e-6;
		const gb = (E(b0 + d, e0) - E(b0 - d, e0)) / (2 * d);
		const ge = (E(b0, e0 + d) - E(b0, e0 - d)) / (2 * d);
		const paramVar =
			gb * gb * fit.cov.lnBeta + ge * ge * fit.cov.lnEta + 2 * gb * ge * fit.cov.lnBetaLnEta;
		const ps = pOf(fit.beta, fit.eta);
		const spread = ps.reduce((a, p) => a + p * (1 - p), 0);
		const sd = Math.sqrt(spread + paramVar);
		const r = projectClaims(units, fit, null);
		expect(r.ci95[1]).toBeCloseTo(r.expected + 1.959963984540054 * sd, 6);
		expect(r.ci95[0]).toBeCloseTo(Math.max(0, r.expected - 1.959963984540054 * sd), 6);
	});

	it('weights a claim by its cost for the money figure', () => {
		const units = [{ ageYears: 10, remainingYears: 10 }];
		const n = projectClaims(units, fit, null).expected;
		expect(projectClaims([{ ...units[0], weight: 1500 }], fit, null).expected).toBeCloseTo(
			1500 * n,
			9
		);
	});
});

describe('a fleet selection summarised', () => {
	const rec = (over: Partial<ServiceRecord>): ServiceRecord => ({
		inServiceFrom: '2020-01-01',
		leftServiceOn: null,
		warrantyEndsOn: '2035-01-01',
		claims: [],
		replacementCost: 1200,
		...over
	});

	it('exposure runs to the as-of day or the day it left service, in years of 365.25 days; claims after as-of are not counted', () => {
		const s = summariseFleet(
			[
				rec({}),
				rec({
					inServiceFrom: '2022-01-01',
					leftServiceOn: '2023-01-01',
					claims: [{ filedOn: '2022-12-01', covered: true, decided: true }]
				}),
				rec({ claims: [{ filedOn: '2024-06-02', covered: true, decided: true }] }),
				rec({ inServiceFrom: '2025-01-01' })
			],
			'2024-06-01'
		);
		const days = (a: string, b: string) => (Date.parse(b) - Date.parse(a)) / 86_400_000;
		const expectedYears =
			(2 * days('2020-01-01', '2024-06-01') + days('2022-01-01', '2023-01-01')) / 365.25;
		expect(s.unitYears).toBeCloseTo(expectedYears, 10);
		expect(s.unitsInService).toBe(2);
		expect(s.claims).toEqual({ covered: 1, all: 1, undecided: 0 });
		expect(s.ratePer1000UnitYears).toBeCloseTo((1 / expectedYears) * 1000, 10);
		expect(s.weibull.beta).toBeNull();
		if (s.weibull.beta === null) expect(s.weibull.refusal).toMatch(/at least two failures/);
		expect(s.reserve.refusal).toMatch(/No reserve without a life model/);
	});

	it('a unit commissioned on the as-of day is in service with no exposure yet; one leaving that day is out', () => {
		const s = summariseFleet(
			[rec({ inServiceFrom: '2024-06-01' }), rec({ leftServiceOn: '2024-06-01' })],
			'2024-06-01'
		);
		expect(s.unitsInService).toBe(1);
	});

	it('fits, projects and prices when there are failures; basis "all" counts undecided claims too', () => {
		const records = [
			...Array.from({ length: 30 }, (_, i) =>
				rec({ inServiceFrom: `20${String(10 + (i % 10)).padStart(2, '0')}-03-01` })
			),
			...[3, 4, 6, 7].map((y) =>
				rec({
					inServiceFrom: '2012-01-01',
					leftServiceOn: `20${12 + y}-02-01`,
					claims: [{ filedOn: `20${12 + y}-01-15`, covered: true, decided: true }]
				})
			),
			rec({ claims: [{ filedOn: '2023-05-05', covered: false, decided: false }] })
		];
		const s = summariseFleet(records, '2024-06-01');
		expect(s.weibull.beta).not.toBeNull();
		expect(s.weibull.failures).toBe(4);
		expect(s.reserve.claims.map((p) => p.horizonYears)).toEqual([1, 5, 10, null]);
		const [one, five, ten, end] = s.reserve.claims.map((p) => p.expected);
		expect(one).toBeLessThan(five);
		expect(five).toBeLessThan(ten);
		expect(ten).toBeLessThanOrEqual(end + 1e-12);
		expect(s.reserve.cost!.expected).toBeCloseTo(1200 * end, 6);
		expect(s.assumptions.some((a) => a.includes('not yet decided'))).toBe(true);
		const all = summariseFleet(records, '2024-06-01', 'all');
		expect(all.claims.all).toBe(5);
		expect(all.weibull.failures).toBe(5);
	});

	it('slices count a module with two lots in both and use the selection’s fit for the reserve', () => {
		const records = [
			rec({ keys: { lot: ['A', 'B'] } }),
			rec({ keys: { lot: ['A'] } }),
			rec({ keys: {} })
		];
		const rows = sliceFleet(records, 'lot', '2024-06-01', 'covered', null);
		expect(rows.map((r) => [r.key, r.unitsInService])).toEqual([
			['(not recorded)', 1],
			['A', 2],
			['B', 1]
		]);
	});
});
