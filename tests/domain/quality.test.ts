import { describe as group, expect, it } from 'vitest';
import * as ss from 'simple-statistics';
import jStat from 'jstat';
import {
	capability,
	describe,
	grubbs,
	grubbsCritical,
	histogram,
	MAX_BINS,
	quantileType7,
	tukeyFences
} from '../../src/lib/domain/quality';

/** Plain-loop mean and sample standard deviation, independent of both libraries. */
function handMeanSd(xs: number[]) {
	let sum = 0;
	for (const x of xs) sum += x;
	const mean = sum / xs.length;
	let ss2 = 0;
	for (const x of xs) ss2 += (x - mean) ** 2;
	return { mean, sd: Math.sqrt(ss2 / (xs.length - 1)) };
}

/**
 * R's documented type 7 (?quantile, Hyndman & Fan 1996), 1-based as R writes it:
 * m = 1 − p, j = ⌊np + m⌋, g = np + m − j, Q = (1 − g)·x_j + g·x_{j+1}.
 */
function rType7(sorted: number[], p: number) {
	const n = sorted.length;
	const m = 1 - p;
	const j = Math.floor(n * p + m + 1e-12);
	const g = n * p + m - j;
	const x = (k: number) => sorted[Math.min(Math.max(k, 1), n) - 1];
	return (1 - g) * x(j) + g * x(j + 1);
}

/** NIST/SEMATECH e-Handbook §7.1.6 example data. */
const NIST_716 = [13.6, 44.4, 45.9, 14.9, 41.9, 53.3, 44.7, 95.2, 44.1, 50.7, 45.2, 60.1, 89.1];
/** NIST/SEMATECH e-Handbook §1.3.5.17.1 Grubbs example data. */
const NIST_GRUBBS = [199.31, 199.53, 200.19, 200.82, 201.92, 201.95, 202.18, 245.57];

group('describe — n, mean, sample sd (n − 1), min, max', () => {
	it('hand values: 2, 4, 4, 4, 5, 5, 7, 9 → mean 5, s = √(32/7) [calc]', () => {
		const d = describe([2, 4, 4, 4, 5, 5, 7, 9]);
		expect(d).toEqual({ n: 8, mean: 5, sd: expect.closeTo(Math.sqrt(32 / 7), 12), min: 2, max: 9 });
	});

	it('agrees with a plain loop and with jStat (sample flag) on the NIST Grubbs data', () => {
		const d = describe(NIST_GRUBBS);
		const h = handMeanSd(NIST_GRUBBS);
		expect(d.mean).toBeCloseTo(h.mean, 10);
		expect(d.sd!).toBeCloseTo(h.sd, 10);
		expect(d.sd!).toBeCloseTo(jStat.stdev(NIST_GRUBBS, true), 10);
		expect([d.min, d.max]).toEqual([199.31, 245.57]);
	});

	it('has no sample sd for one value, and refuses no values or non-numbers', () => {
		expect(describe([3.2]).sd).toBeNull();
		expect(() => describe([])).toThrow(RangeError);
		expect(() => describe([1, Number.NaN])).toThrow(/index 1/);
	});
});

group('capability — Cp/Cpk', () => {
	it('Cp/Cpk — NIST/SEMATECH e-Handbook §6.1.6 example (from memory; recomputed): USL 20, LSL 8, μ 16, σ 2 → Cp 1.0, Cpk 0.6667', () => {
		const c = capability({ mean: 16, sd: 2 }, { lsl: 8, usl: 20 });
		expect(c.cp).toBeCloseTo((20 - 8) / (6 * 2), 12);
		expect(c.cp).toBeCloseTo(1.0, 4);
		expect(c.cpk).toBeCloseTo(0.6667, 4);
		expect(c.cpu).toBeCloseTo((20 - 16) / 6, 12);
		expect(c.cpl).toBeCloseTo((16 - 8) / 6, 12);
		expect(c.reason).toBeNull();
	});

	it('one-sided: only USL gives Cpu as Cpk, only LSL gives Cpl; Cp needs both', () => {
		const upper = capability({ mean: 16, sd: 2 }, { usl: 20 });
		expect([upper.cp, upper.cpl]).toEqual([null, null]);
		expect(upper.cpk).toBeCloseTo(0.6667, 4);
		const lower = capability({ mean: 16, sd: 2 }, { lsl: 8 });
		expect(lower.cpk).toBeCloseTo(1.3333, 4);
		expect(lower.cp).toBeNull();
	});

	it('is null with a reason when σ is 0 or unknown, no limit is set, or the limits are reversed', () => {
		expect(capability({ mean: 16, sd: 0 }, { lsl: 8, usl: 20 })).toMatchObject({
			cp: null,
			cpk: null,
			reason: expect.stringMatching(/standard deviation is zero/)
		});
		expect(capability({ mean: 16, sd: null }, { lsl: 8 }).reason).toMatch(/unknown/);
		expect(capability({ mean: 16, sd: 2 }, {}).reason).toMatch(/No specification limit/);
		expect(capability({ mean: 16, sd: 2 }, { lsl: 20, usl: 8 }).reason).toMatch(/must be above/);
	});
});

group('quantileType7 — Hyndman & Fan type 7 (R default)', () => {
	const sorted = [...NIST_716].sort((a, b) => a - b);

	it('NIST §7.1.6 data: Q1 44.1, Q3 53.3 [calc]', () => {
		expect(quantileType7(sorted, 0.25)).toBeCloseTo(44.1, 10);
		expect(quantileType7(sorted, 0.75)).toBeCloseTo(53.3, 10);
	});

	it("matches R's documented type-7 definition, written out independently, over many p", () => {
		for (let p = 0; p <= 1.0000001; p += 0.01) {
			const q = Math.min(p, 1);
			expect(quantileType7(sorted, q)).toBeCloseTo(rType7(sorted, q), 10);
			expect(quantileType7([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], q)).toBeCloseTo(
				rType7([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], q),
				10
			);
		}
		expect(quantileType7([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], 0.33)).toBeCloseTo(3.97, 10); // 1 + 9 × 0.33
	});

	it('simple-statistics 7.12.1 quantileSorted is type 7 too (checked in its source), and agrees', () => {
		for (const p of [0, 0.1, 0.25, 0.5, 0.75, 0.9, 1])
			expect(quantileType7(sorted, p)).toBeCloseTo(ss.quantileSorted(sorted, p), 10);
	});

	it('jStat.quantiles matches only with alphap = betap = 1; its default (3/8, 3/8, type 9) gives another Q1', () => {
		const [q1, q3] = jStat.quantiles(NIST_716, [0.25, 0.75], 1, 1);
		expect(q1).toBeCloseTo(44.1, 10);
		expect(q3).toBeCloseTo(53.3, 10);
		expect(jStat.percentile(NIST_716, 0.25)).toBeCloseTo(44.1, 10);
		expect(jStat.quantiles(NIST_716, [0.25])[0]).toBeCloseTo(43.4125, 10); // 0.3125·41.9 + 0.6875·44.1 [calc]
	});

	it('ends and bad input', () => {
		expect(quantileType7([7], 0.3)).toBe(7);
		expect(quantileType7(sorted, 0)).toBe(13.6);
		expect(quantileType7(sorted, 1)).toBe(95.2);
		expect(() => quantileType7(sorted, 1.1)).toThrow(RangeError);
		expect(() => quantileType7([], 0.5)).toThrow(RangeError);
	});
});

group('tukeyFences — NIST/SEMATECH e-Handbook §7.1.6', () => {
	it('NIST §7.1.6 data, type-7 quartiles: IQR 9.2, inner fences 30.3 / 67.1, outer 16.5 / 80.9 [calc]', () => {
		const f = tukeyFences(NIST_716);
		expect(f.method).toBe('hyndman-fan-type-7');
		expect(f.q1).toBeCloseTo(44.1, 10);
		expect(f.q3).toBeCloseTo(53.3, 10);
		expect(f.iqr).toBeCloseTo(9.2, 10);
		expect(f.inner.lower).toBeCloseTo(30.3, 10);
		expect(f.inner.upper).toBeCloseTo(67.1, 10);
		expect(f.outer.lower).toBeCloseTo(44.1 - 3 * 9.2, 10);
		expect(f.outer.upper).toBeCloseTo(53.3 + 3 * 9.2, 10);
		// 13.6 and 14.9 lie below 16.5, 95.2 and 89.1 above 80.9; 60.1 is inside 67.1.
		expect(f.extreme.map((i) => NIST_716[i])).toEqual([13.6, 14.9, 95.2, 89.1]);
		expect(f.mild).toEqual([]);
	});

	it('a value on a fence is not beyond it; just past it is a mild outlier', () => {
		// 1…8 with a ninth value: Q1 = 3, Q3 = 7 (type 7, n = 9), inner upper fence 13.
		expect(tukeyFences([1, 2, 3, 4, 5, 6, 7, 8, 13]).mild).toEqual([]);
		expect(tukeyFences([1, 2, 3, 4, 5, 6, 7, 8, 13.01]).mild).toEqual([8]);
		expect(tukeyFences([1, 2, 3, 4, 5, 6, 7, 8, 20]).extreme).toEqual([8]);
	});
});

group('grubbs — NIST/SEMATECH e-Handbook §1.3.5.17', () => {
	it('NIST §1.3.5.17.1 example: G = 2.4688, critical 2.1266 (α 0.05, N 8) → 245.57 is an outlier', () => {
		const r = grubbs(NIST_GRUBBS);
		if (!r.applicable) throw new Error(r.reason);
		const h = handMeanSd(NIST_GRUBBS);
		expect(r.g).toBeCloseTo((245.57 - h.mean) / h.sd, 10);
		expect(r.g).toBeCloseTo(2.4688, 4);
		expect(r.critical).toBeCloseTo(2.1266, 4);
		expect([r.index, r.value, r.outlier]).toEqual([7, 245.57, true]);
		expect(r.outlierIndices).toEqual([7]);
	});

	it('the t quantile used is the upper α/(2N) point: Student t CDF at t equals 1 − α/(2N)', () => {
		const n = 8;
		const t = jStat.studentt.inv(1 - 0.05 / (2 * n), n - 2);
		expect(jStat.studentt.cdf(t, n - 2)).toBeCloseTo(1 - 0.05 / 16, 9);
		expect(grubbsCritical(n)).toBeCloseTo(
			((n - 1) / Math.sqrt(n)) * Math.sqrt((t * t) / (n - 2 + t * t)),
			12
		);
	});

	it('critical values agree with a published two-sided table at α 0.05 (third-party copy): N 10 → 2.2900, 20 → 2.7082, 100 → 3.3841', () => {
		expect(grubbsCritical(10)).toBeCloseTo(2.29, 3);
		expect(grubbsCritical(20)).toBeCloseTo(2.7082, 3);
		expect(grubbsCritical(100)).toBeCloseTo(3.3841, 3);
	});

	it('is not applicable for N ≤ 6 (NIST) or when all values are equal', () => {
		expect(grubbs(NIST_GRUBBS.slice(0, 6))).toEqual({
			applicable: false,
			reason: "Grubbs' test needs at least 7 values; there are 6."
		});
		expect(grubbs(NIST_GRUBBS.slice(1)).applicable).toBe(true);
		expect(grubbs([5, 5, 5, 5, 5, 5, 5, 5])).toMatchObject({ applicable: false });
	});

	it('no outlier in the NIST data without 245.57', () => {
		const r = grubbs(NIST_GRUBBS.slice(0, 7));
		expect(r.applicable && r.outlier).toBe(false);
	});

	it('iterates when asked: removes each outlier found and retests the rest', () => {
		const data = [...NIST_GRUBBS, 199.8, 200.6, 201.1, 200.4, 230.0];
		const single = grubbs(data);
		const many = grubbs(data, 0.05, { maxOutliers: 5 });
		if (!single.applicable || !many.applicable) throw new Error('expected applicable');
		expect(single.outlierIndices).toEqual([7]);
		expect(many.outlierIndices).toEqual([7, 12]);
		// Each step is the one-outlier test on what is left, recomputed here.
		const rest = data.filter((_, i) => i !== 7);
		const h = handMeanSd(rest);
		expect(many.steps[1].n).toBe(rest.length);
		expect(many.steps[1].g).toBeCloseTo((230 - h.mean) / h.sd, 10);
		expect(many.steps[1].critical).toBeCloseTo(grubbsCritical(rest.length), 12);
		expect(many.steps.at(-1)!.outlier).toBe(false);
	});
});

group('histogram — bins for the workshop chart', () => {
	it('Freedman–Diaconis: 1…100 has IQR 49.5, width 2·49.5/∛100 ≈ 21.3, so 5 bins over 99 [calc]', () => {
		const xs = Array.from({ length: 100 }, (_, i) => i + 1);
		const h = histogram(xs);
		expect(h.rule).toBe('freedman-diaconis');
		expect(h.counts).toHaveLength(Math.ceil(99 / ((2 * 49.5) / Math.cbrt(100))));
		expect(h.edges[0]).toBe(1);
		expect(h.edges.at(-1)).toBe(100);
		expect(h.counts).toEqual([20, 20, 20, 20, 20]);
	});

	it('Sturges when the IQR is 0: k = ⌈log₂ 8⌉ + 1 = 4', () => {
		const h = histogram([5, 5, 5, 5, 5, 5, 5, 9]);
		expect(h.rule).toBe('sturges');
		expect(h.counts).toEqual([7, 0, 0, 1]);
	});

	it(`never more than ${MAX_BINS} bins, whatever the rule or the request`, () => {
		const tight = [...Array.from({ length: 50 }, (_, i) => 10 + i * 0.001), 1000];
		expect(histogram(tight).counts).toHaveLength(MAX_BINS);
		expect(histogram([1, 2, 3], { bins: 500 }).counts).toHaveLength(MAX_BINS);
	});

	it('every value lands in one bin (the last bin is closed), and limits are counted', () => {
		const xs = [44.1, 45.0, 45.5, 46.2, 46.2, 46.8, 47.3, 49.0];
		const h = histogram(xs, { bins: 4, lsl: 45, usl: 50 });
		expect(h.rule).toBe('fixed');
		expect(h.counts.reduce((a, b) => a + b, 0)).toBe(xs.length);
		expect(h.edges).toHaveLength(5);
		expect(h.counts.at(-1)).toBeGreaterThan(0);
		expect([h.belowLsl, h.aboveUsl]).toEqual([1, 0]);
		expect(h.domain).toEqual([44.1, 50]);
	});

	it('one distinct value gives one bar with a width; no values give no bars', () => {
		const h = histogram([3.2, 3.2, 3.2]);
		expect(h.counts).toEqual([3]);
		expect(h.edges[1] - h.edges[0]).toBeGreaterThan(0);
		expect(histogram([]).counts).toEqual([]);
	});
});
