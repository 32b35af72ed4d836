/**
 * Individuals and moving-range (I-MR) control charts for results that arrive one at a
 * time, and the run rules that flag a process drifting before it fails a limit.
 *
 * Source: NIST/SEMATECH e-Handbook of Statistical Methods, §6.3.2.2 "Individuals Control
 * Charts": MR(i) = |x(i) − x(i−1)|; centre line x̄; UCL/LCL = x̄ ± 3·MR̄/1.128 (d2 for n = 2).
 * The moving-range chart's upper limit is D4·MR̄ with D4 = 3.267 for n = 2 (the Shewhart
 * constant table, §6.3.2.1). The run rules are the Western Electric rules as listed in
 * §6.3.2 ("WECO rules"), read on either side of the centre line.
 */

/** d2 for moving ranges of two (NIST §6.3.2.2). */
export const D2_N2 = 1.128;
/** D4 for moving ranges of two (Shewhart constants, NIST §6.3.2.1). */
export const D4_N2 = 3.267;
/** Fewest points for which limits are drawn at all. */
export const MIN_POINTS = 2;
/** Points below which limits are called provisional (common practice: 20–25 points). */
export const PROVISIONAL_BELOW = 20;

export type RunRule = 'beyond3' | 'twoOfThree' | 'fourOfFive' | 'eightOneSide' | 'mrBeyond';

export const RUN_RULE_TEXT: Record<RunRule, string> = {
	beyond3: 'a point beyond a 3σ control limit',
	twoOfThree: '2 of 3 points in a row beyond 2σ on the same side',
	fourOfFive: '4 of 5 points in a row beyond 1σ on the same side',
	eightOneSide: '8 points in a row on the same side of the centre line',
	mrBeyond: 'a jump between two results beyond the moving-range limit'
};

export interface Signal {
	/** Index of the point that completes the pattern. */
	index: number;
	rule: RunRule;
	side: 'above' | 'below' | null;
}

export interface IndividualsChart {
	n: number;
	mean: number;
	/** Mean of the n − 1 moving ranges. */
	mrBar: number;
	/** σ estimated as MR̄ / d2. */
	sigma: number;
	ucl: number;
	lcl: number;
	/** Upper limit of the moving-range chart (its lower limit is 0). */
	mrUcl: number;
	/** Moving ranges; the first point has none (null). */
	movingRanges: (number | null)[];
	signals: Signal[];
	provisional: boolean;
}

/**
 * The I-MR chart of values in time order, with every run-rule signal. Each rule is
 * reported at the point that completes it, once per point and rule.
 * @returns null below MIN_POINTS values
 */
export function individualsChart(values: readonly number[]): IndividualsChart | null {
	const n = values.length;
	if (n < MIN_POINTS) return null;
	let sum = 0;
	for (const v of values) sum += v;
	const mean = sum / n;
	const movingRanges: (number | null)[] = [null];
	let mrSum = 0;
	for (let i = 1; i < n; i++) {
		const mr = Math.abs(values[i] - values[i - 1]);
		movingRanges.push(mr);
		mrSum += mr;
	}
	const mrBar = mrSum / (n - 1);
	const sigma = mrBar / D2_N2;
	const chart: IndividualsChart = {
		n,
		mean,
		mrBar,
		sigma,
		ucl: mean + 3 * sigma,
		lcl: mean - 3 * sigma,
		mrUcl: D4_N2 * mrBar,
		movingRanges,
		signals: [],
		provisional: n < PROVISIONAL_BELOW
	};
	chart.signals = runRuleSignals(values, { mean, sigma, mrUcl: chart.mrUcl });
	return chart;
}

/** Zone of a point: how many σ from the centre, signed (above positive). */
function sideOf(v: number, mean: number): 1 | -1 | 0 {
	return v > mean ? 1 : v < mean ? -1 : 0;
}

/**
 * The Western Electric run rules against a centre line and σ (from the data, or a standard
 * or target: NIST §6.3.2.2 allows either). "Beyond" is strict: a point exactly on a 2σ
 * line is not beyond it. A point exactly on the centre line ends a run.
 */
export function runRuleSignals(
	values: readonly number[],
	limits: { mean: number; sigma: number; mrUcl: number }
): Signal[] {
	const { mean, sigma, mrUcl } = limits;
	const signals: Signal[] = [];
	const side = (s: number) => (s > 0 ? 'above' : 'below') as 'above' | 'below';
	// With no spread at all every point sits on the centre line: nothing to signal.
	if (!(sigma > 0)) return signals;
	const beyond = (v: number, k: number, s: number) =>
		s > 0 ? v > mean + k * sigma : v < mean - k * sigma;
	let run = 0;
	let runSide = 0;
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		const s = sideOf(v, mean);
		if (beyond(v, 3, 1) || beyond(v, 3, -1))
			signals.push({ index: i, rule: 'beyond3', side: side(s) });
		for (const dir of [1, -1]) {
			if (beyond(v, 2, dir)) {
				let c = 0;
				for (let j = Math.max(0, i - 2); j <= i; j++) if (beyond(values[j], 2, dir)) c++;
				if (c >= 2) signals.push({ index: i, rule: 'twoOfThree', side: side(dir) });
			}
			if (beyond(v, 1, dir)) {
				let c = 0;
				for (let j = Math.max(0, i - 4); j <= i; j++) if (beyond(values[j], 1, dir)) c++;
				if (c >= 4) signals.push({ index: i, rule: 'fourOfFive', side: side(dir) });
			}
		}
		if (s !== 0 && s === runSide) run++;
		else {
			run = s === 0 ? 0 : 1;
			runSide = s;
		}
		if (run >= 8) signals.push({ index: i, rule: 'eightOneSide', side: side(runSide) });
		const mr = i > 0 ? Math.abs(v - values[i - 1]) : null;
		if (mr !== null && mr > mrUcl) signals.push({ index: i, rule: 'mrBeyond', side: null });
	}
	return signals;
}
