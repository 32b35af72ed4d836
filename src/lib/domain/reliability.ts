/**
 * Reliability of a fleet: claim rates per unit-year with exact Poisson intervals, a
 * two-parameter Weibull life model fitted by maximum likelihood with right-censored units,
 * probability-plot positions, and the warranty claims the fleet will still bring.
 * Pure: ages and exposures arrive in years, nothing reads the clock or the database.
 *
 * Sources: Garwood (1936) exact Poisson limits; the Weibull likelihood with censoring as in
 * the NIST/SEMATECH e-Handbook §8.4.1.2 and Meeker & Escobar, Statistical Methods for
 * Reliability Data (1998), ch. 8; Fisher-matrix bounds on the log scale (ibid., §8.4);
 * Johnson's adjusted ranks with Benard's median-rank approximation for the probability plot.
 */
import jStat from 'jstat';
import { NEUTRAL } from './format';

/** Standard normal 97.5 % quantile, for two-sided 95 % bounds. */
export const Z_975 = 1.959963984540054;

/** Days in a year of exposure (the Julian year, 365.25 days). */
export const DAYS_PER_YEAR = 365.25;

/** Largest inputs the API accepts; the fit is O(n) per iteration, so these stay fast. */
export const MAX_UNITS = 100_000;
export const MAX_EVENTS = 10_000_000;

export type Interval = [lower: number, upper: number];

// ---------------------------------------------------------------------------
// Rates

/**
 * Exact (Garwood 1936) two-sided interval for the mean of a Poisson count k:
 * lower = χ²(α/2; 2k)/2 (0 when k = 0), upper = χ²(1 − α/2; 2k + 2)/2.
 * k = 4 at 95 % gives [1.0899, 10.2416]; k = 0 gives [0, 3.6889].
 */
export function poissonInterval(events: number, confidence = 0.95): Interval {
	if (!Number.isInteger(events) || events < 0)
		throw new RangeError('The number of events must be a whole number, 0 or more.');
	if (events > MAX_EVENTS)
		throw new RangeError(`At most ${NEUTRAL.number(MAX_EVENTS)} events can be assessed.`);
	if (!(confidence > 0 && confidence < 1))
		throw new RangeError('The confidence level must be between 0 and 1.');
	const alpha = 1 - confidence;
	const lower = events === 0 ? 0 : jStat.chisquare.inv(alpha / 2, 2 * events) / 2;
	const upper = jStat.chisquare.inv(1 - alpha / 2, 2 * events + 2) / 2;
	return [lower, upper];
}

export interface RateResult {
	/** Events per 1,000 units of exposure (unit-years for the fleet). */
	ratePer1000: number;
	ci95: Interval;
}

/** Events per 1,000 unit-years with the exact Poisson 95 % interval, both divided by the exposure. */
export function claimRate(events: number, exposure: number): RateResult {
	if (!(Number.isFinite(exposure) && exposure > 0))
		throw new RangeError('The exposure must be a positive number of unit-years.');
	const [lo, hi] = poissonInterval(events);
	return {
		ratePer1000: (events / exposure) * 1000,
		ci95: [(lo / exposure) * 1000, (hi / exposure) * 1000]
	};
}

// ---------------------------------------------------------------------------
// Weibull maximum likelihood with right-censoring

export interface WeibullFit {
	/** Shape β and scale η (η in the unit of the times: years for the fleet). */
	beta: number;
	eta: number;
	failures: number;
	censored: number;
	/** 95 % bounds from the observed (Fisher) information, normal on the log scale. */
	betaCI95: Interval;
	etaCI95: Interval;
	logLikelihood: number;
	/** Covariance of (ln β, ln η): what the reserve's interval propagates. */
	cov: { lnBeta: number; lnEta: number; lnBetaLnEta: number };
}

export type WeibullOutcome =
	({ ok: true } & WeibullFit) | { ok: false; reason: string; failures: number; censored: number };

/** How the bounds are computed, for the page and the API documentation. */
export const WEIBULL_BOUNDS_METHOD =
	'95 % bounds from the observed Fisher information at the maximum, normal on the log scale (β·exp(±1.96·se(ln β)), likewise η).';

function validate(times: readonly number[], censored: readonly boolean[]) {
	if (times.length !== censored.length)
		throw new RangeError(
			`times has ${times.length} entries but censored has ${censored.length}: give one flag per time.`
		);
	if (times.length > MAX_UNITS)
		throw new RangeError(`At most ${NEUTRAL.number(MAX_UNITS)} times can be fitted at once.`);
	for (let i = 0; i < times.length; i++) {
		const t = times[i];
		if (typeof t !== 'number' || !Number.isFinite(t) || t <= 0)
			throw new RangeError(`times[${i}] must be a positive number (got ${String(t)}).`);
		if (typeof censored[i] !== 'boolean')
			throw new RangeError(`censored[${i}] must be true or false.`);
	}
}

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/**
 * Fits a two-parameter Weibull, F(t) = 1 − exp[−(t/η)^β], by maximum likelihood. Failed
 * units contribute ln f(t), censored ones (still running at t) ln S(t). β solves the profile
 * equation Σtᵝ ln t / Σtᵝ − 1/β − (1/d) Σ_failed ln t = 0 (increasing in β, so a bracketed
 * Newton iteration converges), then η = (Σtᵝ / d)^(1/β). Times are scaled by their maximum
 * so tᵝ cannot overflow. Refuses, with the reason, fewer than two failures or failure times
 * that cannot be told apart from the longest time (the likelihood then has no maximum).
 */
export function fitWeibull(times: readonly number[], censored: readonly boolean[]): WeibullOutcome {
	validate(times, censored);
	const n = times.length;
	let d = 0;
	for (const c of censored) if (!c) d++;
	const c = n - d;
	if (d < 2)
		return {
			ok: false,
			failures: d,
			censored: c,
			reason: `A Weibull fit needs at least two failures; there ${d === 1 ? 'is' : 'are'} ${plural(d, 'failure', 'failures')} among ${plural(n, 'unit', 'units')}. Until more units fail, read the claim rate per unit-year instead.`
		};

	let tMax = 0;
	for (const t of times) if (t > tMax) tMax = t;
	const ls = times.map((t) => Math.log(t / tMax)); // ≤ 0
	let sumLnFail = 0;
	let minFailLs = 0;
	for (let i = 0; i < n; i++)
		if (!censored[i]) {
			sumLnFail += ls[i];
			minFailLs = Math.min(minFailLs, ls[i]);
		}
	const meanLnFail = sumLnFail / d;
	if (!(minFailLs < -1e-12))
		return {
			ok: false,
			failures: d,
			censored: c,
			reason:
				'Every failure happened at the longest time observed, so the data cannot tell how the failure rate changes with age and no Weibull maximum exists. Wait for failures at other ages.'
		};

	// g(β) and g'(β) of the profile equation, on the scaled times.
	const sums = (beta: number) => {
		let b = 0;
		let a = 0;
		let q = 0;
		for (let i = 0; i < n; i++) {
			const w = Math.exp(beta * ls[i]);
			b += w;
			a += w * ls[i];
			q += w * ls[i] * ls[i];
		}
		return { a, b, q };
	};
	const g = (beta: number) => {
		const { a, b, q } = sums(beta);
		return {
			value: a / b - 1 / beta - meanLnFail,
			slope: (q * b - a * a) / (b * b) + 1 / (beta * beta)
		};
	};

	let lo = 1e-3;
	let hi = 1;
	while (g(hi).value < 0 && hi < 1e4) hi *= 2;
	if (g(hi).value < 0)
		return {
			ok: false,
			failures: d,
			censored: c,
			reason: `The failure times are too close together for a Weibull fit (β would exceed ${NEUTRAL.number(10_000)}). Check the ages on record.`
		};
	while (g(lo).value > 0 && lo > 1e-9) lo /= 2;
	let beta = Math.min(Math.max(1, lo), hi);
	for (let iter = 0; iter < 200; iter++) {
		const { value, slope } = g(beta);
		if (value === 0) break;
		if (value > 0) hi = beta;
		else lo = beta;
		let next = beta - value / slope;
		if (!(next > lo && next < hi)) next = (lo + hi) / 2;
		const done = Math.abs(next - beta) <= 1e-12 * beta || hi - lo <= 1e-12 * beta;
		beta = next;
		if (done) break;
	}

	const { b: sumW } = sums(beta);
	const etaScaled = Math.pow(sumW / d, 1 / beta);
	const eta = etaScaled * tMax;

	// Observed information in (β, η) on the scaled times; at the maximum Σu = d.
	const lnEtaS = Math.log(etaScaled);
	let sumUL = 0;
	let sumUL2 = 0;
	let logLik = 0;
	for (let i = 0; i < n; i++) {
		const l = ls[i] - lnEtaS;
		const u = Math.exp(beta * l);
		sumUL += u * l;
		sumUL2 += u * l * l;
		logLik -= u;
		if (!censored[i])
			logLik += Math.log(beta) + (beta - 1) * (ls[i] + Math.log(tMax)) - beta * Math.log(eta);
	}
	const iBB = d / (beta * beta) + sumUL2;
	const iEE = (beta * beta * d) / (etaScaled * etaScaled);
	const iBE = -(beta / etaScaled) * sumUL;
	const det = iBB * iEE - iBE * iBE;
	const varB = iEE / det;
	const varE = iBB / det;
	const covBE = -iBE / det;
	const vLnB = varB / (beta * beta);
	const vLnE = varE / (etaScaled * etaScaled);
	const cLnBE = covBE / (beta * etaScaled);
	const sb = Math.sqrt(vLnB);
	const se = Math.sqrt(vLnE);
	return {
		ok: true,
		beta,
		eta,
		failures: d,
		censored: c,
		betaCI95: [beta * Math.exp(-Z_975 * sb), beta * Math.exp(Z_975 * sb)],
		etaCI95: [eta * Math.exp(-Z_975 * se), eta * Math.exp(Z_975 * se)],
		logLikelihood: logLik,
		cov: { lnBeta: vLnB, lnEta: vLnE, lnBetaLnEta: cLnBE }
	};
}

/** Weibull probability of failure by age t. */
export function weibullCdf(t: number, beta: number, eta: number): number {
	return t <= 0 ? 0 : -Math.expm1(-Math.pow(t / eta, beta));
}

/** A plain sentence on what β says, read from its interval rather than the point alone. */
export function readShape(fit: Pick<WeibullFit, 'beta' | 'betaCI95'>): {
	kind: 'early' | 'random' | 'wear-out';
	sentence: string;
} {
	const [lo, hi] = fit.betaCI95;
	const b = fit.beta.toFixed(2);
	const ci = `${lo.toFixed(2)} to ${hi.toFixed(2)}`;
	if (hi < 1)
		return {
			kind: 'early',
			sentence: `β = ${b} (95 % ${ci}) is below 1: the failure rate falls with age, the mark of early failures (build, cells or installation) rather than ageing. Look at lots, build months and commissioning records.`
		};
	if (lo > 1)
		return {
			kind: 'wear-out',
			sentence: `β = ${b} (95 % ${ci}) is above 1: the failure rate rises with age, the mark of wear-out. Claims will come faster as the fleet ages.`
		};
	return {
		kind: 'random',
		sentence: `β = ${b} (95 % ${ci}) cannot be told apart from 1: failures so far look random in time (a constant failure rate), neither early nor wear-out. More failures will narrow this.`
	};
}

// ---------------------------------------------------------------------------
// Probability plot

export interface PlotPoint {
	time: number;
	/** Estimated fraction failed by `time` (median rank). */
	fraction: number;
}

/**
 * Plotting positions of the failures on Weibull paper: Johnson's adjusted order numbers for
 * right-censored data (increment = (n + 1 − previous order) / (1 + units at or beyond this
 * one)), turned into median ranks with Benard's approximation (i − 0.3)/(n + 0.4). At equal
 * times failures are ranked before censored units.
 */
export function probabilityPlotPoints(
	times: readonly number[],
	censored: readonly boolean[]
): PlotPoint[] {
	validate(times, censored);
	const n = times.length;
	const order = times
		.map((t, i) => ({ t, c: censored[i] }))
		.sort((x, y) => x.t - y.t || Number(x.c) - Number(y.c));
	const out: PlotPoint[] = [];
	let previous = 0;
	order.forEach((u, k) => {
		if (u.c) return;
		const atOrBeyond = n - k;
		previous += (n + 1 - previous) / (1 + atOrBeyond);
		out.push({ time: u.t, fraction: (previous - 0.3) / (n + 0.4) });
	});
	return out;
}

// ---------------------------------------------------------------------------
// Claims still to come (warranty reserve)

export interface UnitAtRisk {
	/** Age in service at the as-of date, years. */
	ageYears: number;
	/** Years of warranty left after the as-of date (0 when it has ended). */
	remainingYears: number;
	/** What one claim of this unit weighs: 1 to count claims, a replacement cost for money. */
	weight?: number;
}

export interface Projection {
	/** Horizon in years; null means to the end of every unit's warranty. */
	horizonYears: number | null;
	expected: number;
	ci95: Interval;
}

export const RESERVE_METHOD =
	'Each unit in service of age t contributes [F(t + h) − F(t)] / [1 − F(t)], with h cut at the end of its warranty; the sum is the expected number of claims. The 95 % interval is a normal approximation whose variance adds the unit-to-unit spread (Σ p(1 − p), Poisson-binomial) and the uncertainty of the fitted β and η (delta method on the covariance of ln β and ln η).';

/**
 * Expected claims over the next `horizonYears` (or to the end of each warranty when null):
 * Σ wᵢ [F(tᵢ + hᵢ) − F(tᵢ)] / [1 − F(tᵢ)], computed as 1 − exp(H(tᵢ) − H(tᵢ + hᵢ)) with
 * H = (t/η)^β the cumulative hazard, hᵢ = min(h, warranty left). Interval: see RESERVE_METHOD.
 */
export function projectClaims(
	units: readonly UnitAtRisk[],
	fit: Pick<WeibullFit, 'beta' | 'eta' | 'cov'>,
	horizonYears: number | null
): Projection {
	if (horizonYears !== null && !(horizonYears >= 0))
		throw new RangeError('The horizon must be 0 years or more.');
	const { beta, eta, cov } = fit;
	let expected = 0;
	let spread = 0;
	let gB = 0; // ∂E/∂ln β
	let gE = 0; // ∂E/∂ln η
	for (const u of units) {
		const w = u.weight ?? 1;
		const h = Math.max(
			0,
			horizonYears === null ? u.remainingYears : Math.min(horizonYears, u.remainingYears)
		);
		if (h === 0 || w === 0) continue;
		const t1 = Math.max(0, u.ageYears);
		const t2 = t1 + h;
		const x1 = t1 > 0 ? Math.log(t1 / eta) : -Infinity;
		const x2 = Math.log(t2 / eta);
		const h1 = t1 > 0 ? Math.exp(beta * x1) : 0;
		const h2 = Math.exp(beta * x2);
		const survive = Math.exp(h1 - h2);
		const p = -Math.expm1(h1 - h2);
		expected += w * p;
		spread += w * w * p * (1 - p);
		// dΔH/d ln β = β(H2 x2 − H1 x1); dΔH/d ln η = −β(H2 − H1); dp = survive · dΔH.
		gB += w * survive * beta * (h2 * x2 - (t1 > 0 ? h1 * x1 : 0));
		gE += w * survive * -beta * (h2 - h1);
	}
	const paramVar = gB * gB * cov.lnBeta + gE * gE * cov.lnEta + 2 * gB * gE * cov.lnBetaLnEta;
	const sd = Math.sqrt(spread + Math.max(0, paramVar));
	return {
		horizonYears,
		expected,
		ci95: [Math.max(0, expected - Z_975 * sd), expected + Z_975 * sd]
	};
}

// ---------------------------------------------------------------------------
// A fleet selection summarised

/** One module as the fleet summary needs it; days are calendar days 'YYYY-MM-DD'. */
export interface ServiceRecord {
	/** The module's own start in service (its commissioning, or a replacement's fitting). */
	inServiceFrom: string;
	/** The day it was taken out of service (returned, scrapped), or null. */
	leftServiceOn: string | null;
	warrantyEndsOn: string | null;
	claims: readonly { filedOn: string; covered: boolean; decided: boolean }[];
	/** Replacement cost of its model (the admin's figure), or null when none is entered. */
	replacementCost: number | null;
	/** Slice keys, e.g. { model: 'TC-HC-48', lot: ['HCL-2313-A'], … }. */
	keys?: Record<string, string | readonly string[]>;
}

export type ClaimBasis = 'covered' | 'all';

export interface FleetSummary {
	asOf: string;
	basis: ClaimBasis;
	unitsInService: number;
	unitYears: number;
	claims: { covered: number; all: number; undecided: number };
	ratePer1000UnitYears: number | null;
	rateCI95: Interval | null;
	weibull:
		| (WeibullFit & { reading: string; kind: string; boundsMethod: string })
		| {
				beta: null;
				eta: null;
				failures: number;
				censored: number;
				betaCI95: null;
				etaCI95: null;
				refusal: string;
		  };
	reserve: {
		unitsAtRisk: number;
		claims: Projection[];
		cost: (Projection & { units: number }) | null;
		/** To the end of warranty, per year ahead, for the chart. */
		byYear: Projection[];
		method: string;
		refusal: string | null;
	};
	plot: { points: PlotPoint[]; line: { time: number; fraction: number }[] } | null;
	assumptions: string[];
}

const DAY_MS = 86_400_000;
const dayNumber = (s: string): number => {
	const [y, m, d] = s.split('-').map(Number);
	const t = Date.UTC(y, m - 1, d);
	if (!/^\d{4}-\d{2}-\d{2}$/.test(s) || Number.isNaN(t))
		throw new RangeError(`"${s}" is not a date written YYYY-MM-DD.`);
	return Math.round(t / DAY_MS);
};
/** Days from a to b (b − a), calendar days. */
export const daysBetween = (a: string, b: string) => dayNumber(b) - dayNumber(a);

export const RESERVE_HORIZONS = [1, 5, 10, null] as const;

/** Fleet reliability of a selection of modules as of a day: exposure, rate, fit, reserve. */
export function summariseFleet(
	records: readonly ServiceRecord[],
	asOf: string,
	basis: ClaimBasis = 'covered'
): FleetSummary {
	const w = walk(records, dayNumber(asOf), basis);
	const { row, times, censored, atRisk, noWarrantyEnd } = w;
	const { unitsInService, unitYears, claims } = row;
	const noCost = atRisk.filter((u) => u.cost === null).length;
	const claimWord = basis === 'covered' ? 'covered claims' : 'claims of any outcome';
	const assumptions = [
		`Exposure runs from each module's own start in service (its commissioning; for a replacement, the day it was fitted) to ${asOf} or the day it left service, in years of ${DAYS_PER_YEAR} days.`,
		`The rate counts ${claimWord} filed by ${asOf}; its 95 % interval is the exact Poisson (Garwood) interval, which assumes claims arrive independently at a steady rate.`,
		`The life model takes a module's first ${basis === 'covered' ? 'covered ' : ''}claim as its failure, at its age then; modules without one are censored at their age (still running). Age is service age, not calendar age since build.`
	];
	if (basis === 'covered' && claims.undecided > 0)
		assumptions.push(
			`${plural(claims.undecided, 'claim is', 'claims are')} not yet decided and ${claims.undecided === 1 ? 'is' : 'are'} not counted as covered.`
		);

	const fitOutcome = times.length ? fitWeibull(times, censored) : null;
	let weibull: FleetSummary['weibull'];
	let plot: FleetSummary['plot'] = null;
	const reserve: FleetSummary['reserve'] = {
		unitsAtRisk: atRisk.length,
		claims: [],
		cost: null,
		byYear: [],
		method: RESERVE_METHOD,
		refusal: null
	};
	if (fitOutcome && fitOutcome.ok) {
		const { ok: _ok, ...fit } = fitOutcome;
		void _ok;
		const { cov } = fit;
		const shape = readShape(fitOutcome);
		weibull = {
			...fit,
			reading: shape.sentence,
			kind: shape.kind,
			boundsMethod: WEIBULL_BOUNDS_METHOD
		};
		const points = probabilityPlotPoints(times, censored);
		const tLo = Math.min(...points.map((p) => p.time));
		const tHi = Math.max(...times);
		const line = Array.from({ length: 41 }, (_, i) => {
			const t = tLo * Math.pow(tHi / tLo, i / 40);
			return { time: t, fraction: weibullCdf(t, fit.beta, fit.eta) };
		});
		plot = { points, line };
		const units = atRisk.map(({ ageYears, remainingYears }) => ({ ageYears, remainingYears }));
		const fitted = { beta: fit.beta, eta: fit.eta, cov };
		reserve.claims = RESERVE_HORIZONS.map((h) => projectClaims(units, fitted, h));
		const costed = atRisk.filter((u) => u.cost !== null);
		if (costed.length)
			reserve.cost = {
				...projectClaims(
					costed.map((u) => ({ ...u, weight: u.cost as number })),
					fitted,
					null
				),
				units: costed.length
			};
		const maxLeft = Math.min(40, Math.ceil(Math.max(0, ...atRisk.map((u) => u.remainingYears))));
		reserve.byYear = Array.from({ length: maxLeft + 1 }, (_, y) => projectClaims(units, fitted, y));
		assumptions.push(
			`The reserve projects the fitted Weibull forward for the ${plural(atRisk.length, 'module', 'modules')} in service under warranty without a ${basis === 'covered' ? 'covered ' : ''}claim, each from its present age to at most the end of its warranty; it assumes future use and climate like the past, and does not include modules yet to be commissioned.`
		);
		if (noCost > 0)
			assumptions.push(
				`${plural(noCost, 'module has', 'modules have')} no replacement cost entered for ${noCost === 1 ? 'its' : 'their'} model and ${noCost === 1 ? 'is' : 'are'} left out of the money figure.`
			);
	} else {
		const failures = fitOutcome?.failures ?? 0;
		const cens = fitOutcome?.censored ?? 0;
		const refusal =
			fitOutcome && !fitOutcome.ok
				? fitOutcome.reason
				: 'No module of this selection was in service by this date, so there is nothing to fit.';
		weibull = {
			beta: null,
			eta: null,
			failures,
			censored: cens,
			betaCI95: null,
			etaCI95: null,
			refusal
		};
		reserve.refusal = `No reserve without a life model: ${refusal}`;
	}
	if (noWarrantyEnd > 0)
		assumptions.push(
			`${plural(noWarrantyEnd, 'module has', 'modules have')} no warranty end on record and ${noWarrantyEnd === 1 ? 'is' : 'are'} left out of the reserve.`
		);
	return {
		asOf,
		basis,
		unitsInService,
		unitYears,
		claims,
		ratePer1000UnitYears: row.ratePer1000UnitYears,
		rateCI95: row.rateCI95,
		weibull,
		reserve,
		plot,
		assumptions
	};
}

export interface SliceRow {
	key: string;
	unitsInService: number;
	unitYears: number;
	claims: { covered: number; all: number; undecided: number };
	ratePer1000UnitYears: number | null;
	rateCI95: Interval | null;
	/** Expected claims to the end of warranty for this slice's units, using the whole selection's fit. */
	reserveToEnd: Projection | null;
}

/**
 * The selection broken down by one dimension (a module with two cell lots counts in both).
 * Rates are each slice's own; the reserve uses the whole selection's fit, since a slice
 * rarely has enough failures for a fit of its own.
 */
export function sliceFleet(
	records: readonly ServiceRecord[],
	dimension: string,
	asOf: string,
	basis: ClaimBasis,
	fit: Pick<WeibullFit, 'beta' | 'eta' | 'cov'> | null
): SliceRow[] {
	const groups = new Map<string, ServiceRecord[]>();
	for (const r of records) {
		const raw = r.keys?.[dimension];
		const keys = raw === undefined ? ['(not recorded)'] : typeof raw === 'string' ? [raw] : raw;
		for (const k of keys.length ? keys : ['(not recorded)']) {
			let g = groups.get(k);
			if (!g) groups.set(k, (g = []));
			g.push(r);
		}
	}
	const asOfDay = dayNumber(asOf);
	return [...groups.entries()]
		.sort(([a], [b]) => a.localeCompare(b))
		.map(([key, rs]) => {
			const s = walk(rs, asOfDay, basis);
			return {
				key,
				...s.row,
				reserveToEnd: fit ? projectClaims(s.atRisk, fit, null) : null
			};
		})
		.filter((row) => row.unitYears > 0 || row.unitsInService > 0);
}

/** One pass over the records: exposure, claims, the fit's times and the units at risk. */
function walk(records: readonly ServiceRecord[], asOfDay: number, basis: ClaimBasis) {
	let unitsInService = 0;
	let days = 0;
	let noWarrantyEnd = 0;
	const claims = { covered: 0, all: 0, undecided: 0 };
	const times: number[] = [];
	const censored: boolean[] = [];
	const atRisk: (UnitAtRisk & { cost: number | null })[] = [];
	for (const r of records) {
		const start = dayNumber(r.inServiceFrom);
		if (start > asOfDay) continue;
		const left = r.leftServiceOn === null ? null : dayNumber(r.leftServiceOn);
		const inService = left === null || left > asOfDay;
		const end = inService ? asOfDay : (left as number);
		if (inService) unitsInService++;
		days += Math.max(0, end - start);
		let first: number | null = null;
		for (const c of r.claims) {
			const day = dayNumber(c.filedOn);
			if (day > asOfDay || day < start) continue;
			claims.all++;
			if (c.covered) claims.covered++;
			if (!c.decided) claims.undecided++;
			if ((basis === 'all' || c.covered) && (first === null || day < first)) first = day;
		}
		// A claim on the first day counts as one day of age (the likelihood needs t > 0).
		times.push(Math.max(1, (first ?? end) - start) / DAYS_PER_YEAR);
		censored.push(first === null);
		if (!inService || first !== null) continue;
		if (r.warrantyEndsOn === null) {
			noWarrantyEnd++;
			continue;
		}
		const leftDays = dayNumber(r.warrantyEndsOn) - asOfDay;
		if (leftDays > 0)
			atRisk.push({
				ageYears: (asOfDay - start) / DAYS_PER_YEAR,
				remainingYears: leftDays / DAYS_PER_YEAR,
				cost: r.replacementCost
			});
	}
	const unitYears = days / DAYS_PER_YEAR;
	const events = basis === 'covered' ? claims.covered : claims.all;
	const rate = unitYears > 0 ? claimRate(events, unitYears) : null;
	return {
		row: {
			unitsInService,
			unitYears,
			claims,
			ratePer1000UnitYears: rate?.ratePer1000 ?? null,
			rateCI95: rate?.ci95 ?? null
		},
		times,
		censored,
		atRisk,
		noWarrantyEnd
	};
}
