/**
 * Batch statistics for the workshop: summary, process capability, Tukey fences, Grubbs'
 * test and histogram bins. Formulas from the NIST/SEMATECH e-Handbook of Statistical
 * Methods (section numbers beside each). Pure functions; drawing is elsewhere.
 */
import {
	mean as ssMean,
	sampleStandardDeviation,
	min as ssMin,
	max as ssMax
} from 'simple-statistics';
import jStat from 'jstat';

function assertValues(values: readonly number[], what: string): void {
	if (values.length === 0) throw new RangeError(`${what} needs at least one value`);
	const bad = values.findIndex((v) => !Number.isFinite(v));
	if (bad >= 0)
		throw new RangeError(`${what}: value at index ${bad} is not a finite number (${values[bad]})`);
}

export interface Description {
	n: number;
	mean: number;
	/** Sample standard deviation (divisor n − 1); null when n < 2. */
	sd: number | null;
	min: number;
	max: number;
}

/** n, mean, sample standard deviation (n − 1), min and max. */
export function describe(values: readonly number[]): Description {
	assertValues(values, 'describe');
	return {
		n: values.length,
		mean: ssMean(values as number[]),
		sd: values.length >= 2 ? sampleStandardDeviation(values) : null,
		min: ssMin(values as number[]),
		max: ssMax(values as number[])
	};
}

/**
 * Fewest results from which a capability index is shown as a judgement (coloured); below
 * it the page cautions that the figure is too uncertain. Common practice (often 30–50).
 */
export const MIN_CAPABILITY_N = 30;

export interface Capability {
	/** (USL − LSL) / 6σ; needs both limits. */
	cp: number | null;
	/** min(Cpu, Cpl), or the one that exists when only one limit is given. */
	cpk: number | null;
	/** (USL − μ) / 3σ */
	cpu: number | null;
	/** (μ − LSL) / 3σ */
	cpl: number | null;
	/** Why the indices are null, or null when they could be computed. */
	reason: string | null;
}

/**
 * Process capability, NIST/SEMATECH e-Handbook §6.1.6: Cp = (USL − LSL)/(6σ),
 * Cpk = min[(USL − μ)/(3σ), (μ − LSL)/(3σ)], one-sided (Cpu or Cpl) when only one limit
 * exists. Fed with a batch's sample standard deviation these are strictly the
 * "performance" indices Pp/Ppk of the AIAG manuals (from memory); the workshop reads
 * them the same way.
 */
export function capability(
	{ mean, sd }: { mean: number; sd: number | null },
	{ lsl, usl }: { lsl?: number | null; usl?: number | null }
): Capability {
	const none = (reason: string): Capability => ({
		cp: null,
		cpk: null,
		cpu: null,
		cpl: null,
		reason
	});
	const hasL = lsl !== undefined && lsl !== null;
	const hasU = usl !== undefined && usl !== null;
	if (!hasL && !hasU) return none('No specification limit is set.');
	if (hasL && hasU && !(usl > lsl))
		return none(`The upper limit (${usl}) must be above the lower limit (${lsl}).`);
	if (sd === null || !Number.isFinite(sd))
		return none('The standard deviation is unknown (fewer than two values).');
	if (sd <= 0)
		return none('The standard deviation is zero (all values equal), so capability is undefined.');
	const cpu = hasU ? (usl - mean) / (3 * sd) : null;
	const cpl = hasL ? (mean - lsl) / (3 * sd) : null;
	const cp = hasL && hasU ? (usl - lsl) / (6 * sd) : null;
	const cpk = cpu !== null && cpl !== null ? Math.min(cpu, cpl) : (cpu ?? cpl);
	return { cp, cpk, cpu, cpl, reason: null };
}

/**
 * Sample quantile, Hyndman & Fan (1996) type 7, the default of R's `quantile()`: with
 * h = (n − 1)p, Q = x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋+1] − x[⌊h⌋]) (0-based). `sorted` must be
 * in ascending order. simple-statistics 7.12.1's `quantileSorted` computes the same
 * (checked in its source and in the tests); jStat's `quantiles` does only when called
 * with alphap = betap = 1 — its default 3/8, 3/8 is type 9.
 */
export function quantileType7(sorted: readonly number[], p: number): number {
	assertValues(sorted, 'quantileType7');
	if (!(p >= 0 && p <= 1)) throw new RangeError(`p must be between 0 and 1; got ${p}`);
	const h = (sorted.length - 1) * p;
	const lo = Math.floor(h);
	if (lo >= sorted.length - 1) return sorted[sorted.length - 1];
	return sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]);
}

export interface TukeyFences {
	/** The quantile definition used; results differ between definitions. */
	method: 'hyndman-fan-type-7';
	q1: number;
	q3: number;
	iqr: number;
	/** Q1 − 1.5 IQR and Q3 + 1.5 IQR */
	inner: { lower: number; upper: number };
	/** Q1 − 3 IQR and Q3 + 3 IQR */
	outer: { lower: number; upper: number };
	/** Indices (into the input) of values beyond an inner fence but not an outer one. */
	mild: number[];
	/** Indices of values beyond an outer fence. */
	extreme: number[];
}

/**
 * Tukey's fences, NIST/SEMATECH e-Handbook §7.1.6: beyond the inner fences (1.5 IQR) a
 * value is a mild outlier, beyond the outer fences (3 IQR) an extreme one. A value on a
 * fence is not beyond it. Quartiles by type 7.
 */
export function tukeyFences(values: readonly number[]): TukeyFences {
	assertValues(values, 'tukeyFences');
	const sorted = [...values].sort((a, b) => a - b);
	const q1 = quantileType7(sorted, 0.25);
	const q3 = quantileType7(sorted, 0.75);
	const iqr = q3 - q1;
	const inner = { lower: q1 - 1.5 * iqr, upper: q3 + 1.5 * iqr };
	const outer = { lower: q1 - 3 * iqr, upper: q3 + 3 * iqr };
	const mild: number[] = [];
	const extreme: number[] = [];
	values.forEach((v, i) => {
		if (v < outer.lower || v > outer.upper) extreme.push(i);
		else if (v < inner.lower || v > inner.upper) mild.push(i);
	});
	return { method: 'hyndman-fan-type-7', q1, q3, iqr, inner, outer, mild, extreme };
}

export interface GrubbsStep {
	n: number;
	mean: number;
	sd: number;
	/** G = max |xᵢ − x̄| / s */
	g: number;
	critical: number;
	/** Index into the original input of the most extreme value of this step. */
	index: number;
	value: number;
	outlier: boolean;
}

export type GrubbsResult =
	| { applicable: false; reason: string }
	| {
			applicable: true;
			alpha: number;
			/** The first test, on all values. */
			g: number;
			critical: number;
			index: number;
			value: number;
			outlier: boolean;
			/** Indices of the values found to be outliers, in the order found. */
			outlierIndices: number[];
			steps: GrubbsStep[];
	  };

/** Two-sided Grubbs critical value for N values (NIST §1.3.5.17). */
export function grubbsCritical(n: number, alpha = 0.05): number {
	const t = jStat.studentt.inv(1 - alpha / (2 * n), n - 2);
	return ((n - 1) / Math.sqrt(n)) * Math.sqrt((t * t) / (n - 2 + t * t));
}

/** Below this N the test is not to be used (NIST §1.3.5.17: "six or less"). */
const GRUBBS_MIN_N = 7;

/**
 * Grubbs' test for one outlier, two-sided, NIST/SEMATECH e-Handbook §1.3.5.17:
 * G = max|xᵢ − x̄|/s against G_crit = ((N−1)/√N)·√(t²/(N−2+t²)), t the upper α/(2N)
 * quantile of Student's t with N − 2 degrees of freedom. It assumes the rest of the data
 * is normal. With `maxOutliers` > 1 a found outlier is removed and the test repeated;
 * NIST warns that repetition changes the detection probabilities and points to the
 * generalised ESD test for several outliers (from memory).
 */
export function grubbs(
	values: readonly number[],
	alpha = 0.05,
	options: { maxOutliers?: number } = {}
): GrubbsResult {
	assertValues(values, 'grubbs');
	if (!(alpha > 0 && alpha < 1))
		throw new RangeError(`alpha must be between 0 and 1; got ${alpha}`);
	if (values.length < GRUBBS_MIN_N) {
		return {
			applicable: false,
			reason: `Grubbs' test needs at least ${GRUBBS_MIN_N} values; there are ${values.length}.`
		};
	}
	const maxOutliers = options.maxOutliers ?? 1;
	let remaining = values.map((value, index) => ({ value, index }));
	const steps: GrubbsStep[] = [];
	while (remaining.length >= GRUBBS_MIN_N) {
		const xs = remaining.map((r) => r.value);
		const n = xs.length;
		const mean = ssMean(xs);
		const sd = sampleStandardDeviation(xs);
		if (sd === 0) {
			if (steps.length === 0)
				return { applicable: false, reason: 'All values are equal, so no value stands out.' };
			break;
		}
		let k = 0;
		for (let i = 1; i < n; i++) if (Math.abs(xs[i] - mean) > Math.abs(xs[k] - mean)) k = i;
		const g = Math.abs(xs[k] - mean) / sd;
		const critical = grubbsCritical(n, alpha);
		const outlier = g > critical;
		steps.push({ n, mean, sd, g, critical, index: remaining[k].index, value: xs[k], outlier });
		const found = steps.filter((s) => s.outlier).length;
		if (!outlier || found >= maxOutliers) break;
		remaining = remaining.filter((_, i) => i !== k);
	}
	const first = steps[0];
	return {
		applicable: true,
		alpha,
		g: first.g,
		critical: first.critical,
		index: first.index,
		value: first.value,
		outlier: first.outlier,
		outlierIndices: steps.filter((s) => s.outlier).map((s) => s.index),
		steps
	};
}

/** Most bins a histogram gets, so bars stay readable in the workshop's SVG (common practice). */
export const MAX_BINS = 30;

export interface Histogram {
	/** How the bin count was chosen. */
	rule: 'freedman-diaconis' | 'sturges' | 'fixed';
	/** counts.length + 1 ascending edges; bins are [eᵢ, eᵢ₊₁), the last one closed. */
	edges: number[];
	counts: number[];
	binWidth: number;
	n: number;
	/** Values below LSL / above USL, when the limit is given. */
	belowLsl: number | null;
	aboveUsl: number | null;
	/** Axis range covering data and limits, for drawing the limit lines. */
	domain: [number, number];
}

/**
 * Histogram bins. Bin width by Freedman & Diaconis (1981), h = 2·IQR·n^(−1/3), which
 * resists outliers; when IQR is 0 the count by Sturges (1926), k = ⌈log₂ n⌉ + 1. A
 * `bins` option fixes the count. Never more than MAX_BINS.
 */
export function histogram(
	values: readonly number[],
	opts: { bins?: number; lsl?: number | null; usl?: number | null } = {}
): Histogram {
	const lsl = opts.lsl ?? null;
	const usl = opts.usl ?? null;
	const limits = [lsl, usl].filter((x): x is number => x !== null);
	if (values.length === 0) {
		const domain: [number, number] = limits.length
			? [Math.min(...limits), Math.max(...limits)]
			: [0, 1];
		return {
			rule: 'fixed',
			edges: [],
			counts: [],
			binWidth: 0,
			n: 0,
			belowLsl: lsl === null ? null : 0,
			aboveUsl: usl === null ? null : 0,
			domain
		};
	}
	assertValues(values, 'histogram');
	const sorted = [...values].sort((a, b) => a - b);
	const n = sorted.length;
	let lo = sorted[0];
	let hi = sorted[n - 1];
	let rule: Histogram['rule'];
	let bins: number;
	if (lo === hi) {
		// One bar; give it a width so it can be drawn.
		const pad = lo !== 0 ? Math.abs(lo) * 0.01 : 0.5;
		lo -= pad;
		hi += pad;
		rule = opts.bins ? 'fixed' : 'sturges';
		bins = 1;
	} else if (opts.bins !== undefined) {
		rule = 'fixed';
		bins = Math.max(1, Math.floor(opts.bins));
	} else {
		const iqr = quantileType7(sorted, 0.75) - quantileType7(sorted, 0.25);
		if (iqr > 0) {
			rule = 'freedman-diaconis';
			// h = 2·IQR·n^(−1/3) → bins = range / h
			bins = Math.max(1, Math.ceil((hi - lo) / ((2 * iqr) / Math.cbrt(n))));
		} else {
			rule = 'sturges';
			bins = Math.ceil(Math.log2(n)) + 1;
		}
	}
	bins = Math.min(bins, MAX_BINS);
	const binWidth = (hi - lo) / bins;
	const edges = Array.from({ length: bins + 1 }, (_, i) => (i === bins ? hi : lo + i * binWidth));
	const counts = new Array<number>(bins).fill(0);
	for (const v of sorted) {
		let i = Math.min(bins - 1, Math.floor((v - lo) / binWidth));
		// Guard against rounding putting an edge value in the neighbouring bin.
		if (i > 0 && v < edges[i]) i--;
		if (i < bins - 1 && v >= edges[i + 1]) i++;
		counts[i]++;
	}
	return {
		rule,
		edges,
		counts,
		binWidth,
		n,
		belowLsl: lsl === null ? null : sorted.filter((v) => v < lsl).length,
		aboveUsl: usl === null ? null : sorted.filter((v) => v > usl).length,
		domain: [Math.min(lo, ...limits), Math.max(hi, ...limits)]
	};
}
