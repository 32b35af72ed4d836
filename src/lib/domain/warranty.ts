/**
 * Warranty assessment for TC-HC modules: term, equivalent full cycles, temperature
 * derating and promised capacity retention. Pure: dates arrive as 'YYYY-MM-DD' strings,
 * nothing reads the clock. Formulas and check values: shared/REFERENCES.md §2 and §5.
 */
import { addYears, differenceInCalendarDays, format, isValid, parseISO } from 'date-fns';
import type { WarrantyTerms } from './model';

/** Molar gas constant, J/(mol·K). CODATA 2018; exact in the 2019 SI (REFERENCES §5). */
export const R_GAS = 8.314462618;

const KELVIN_OFFSET = 273.15;

const toKelvin = (c: number): number => {
	const k = c + KELVIN_OFFSET;
	if (!(k > 0)) throw new RangeError(`Temperature ${c} °C is at or below absolute zero.`);
	return k;
};

const round = (x: number, digits: number): number => {
	const f = 10 ** digits;
	return Math.round(x * f) / f;
};

// ---------------------------------------------------------------------------
// Arrhenius (REFERENCES §5)

/**
 * Acceleration factor of ageing from t1C to t2C: AF = exp[(Ea/R)(1/T1 − 1/T2)], T in K.
 * Above 1 when t2C is hotter. 25 → 55 °C at 50 kJ/mol gives 6.3215.
 */
export function arrheniusFactor(eaJPerMol: number, t1C: number, t2C: number): number {
	return Math.exp((eaJPerMol / R_GAS) * (1 / toKelvin(t1C) - 1 / toKelvin(t2C)));
}

/**
 * Apparent activation energy (J/mol) of the model
 * cycles(T) = refCycles × exp[(Ea/R)(1/T − 1/T_ref)] that passes exactly through the hot
 * point: Ea = R ln(refCycles / hotCycles) / (1/T_ref − 1/T_hot).
 */
export function fitActivationEnergy(
	refTempC: number,
	refCycles: number,
	hotTempC: number,
	hotCycles: number
): number {
	if (!(refCycles > 0 && hotCycles > 0)) throw new RangeError('Rated cycles must be positive.');
	if (!(hotTempC > refTempC))
		throw new RangeError('The hot temperature must be above the reference temperature.');
	if (!(hotCycles < refCycles))
		throw new RangeError('The hot rated cycles must be fewer than the reference rated cycles.');
	return (
		(R_GAS * Math.log(refCycles / hotCycles)) / (1 / toKelvin(refTempC) - 1 / toKelvin(hotTempC))
	);
}

export interface DeratedCycles {
	/** Rated cycles at the operating temperature (full precision). */
	cycles: number;
	/** True when the operating temperature was known and above the reference. */
	derated: boolean;
	/** Divisor applied to the rated cycles (1 when not derated). */
	factor: number;
	activationEnergyJPerMol: number;
	/** One sentence saying which temperature was used and why. */
	reason: string;
}

/**
 * Rated cycles at the average cell temperature. At or below the reference temperature,
 * or when the temperature is unknown, the rated cycles apply unchanged: the terms promise
 * no more life for cooler operation, and an unknown temperature is not held against the
 * owner. Above the hot point the fit is extrapolated, and the reason says so.
 */
export function deratedCycles(terms: WarrantyTerms, avgCellTempC: number | null): DeratedCycles {
	const ea = fitActivationEnergy(
		terms.referenceTempC,
		terms.ratedCycles,
		terms.hotTempC,
		terms.hotRatedCycles
	);
	const rated = `${fmt(terms.ratedCycles, 0)} cycles rated at ${fmtTemp(terms.referenceTempC)}`;
	if (avgCellTempC === null || !Number.isFinite(avgCellTempC)) {
		return {
			cycles: terms.ratedCycles,
			derated: false,
			factor: 1,
			activationEnergyJPerMol: ea,
			reason: `No average cell temperature was given, so the ${rated} are used without derating.`
		};
	}
	if (avgCellTempC <= terms.referenceTempC) {
		return {
			cycles: terms.ratedCycles,
			derated: false,
			factor: 1,
			activationEnergyJPerMol: ea,
			reason: `The average cell temperature of ${fmtTemp(avgCellTempC)} is at or below the ${fmtTemp(terms.referenceTempC)} reference, so the ${rated} apply without derating.`
		};
	}
	const factor = arrheniusFactor(ea, terms.referenceTempC, avgCellTempC);
	const cycles = terms.ratedCycles / factor;
	const beyond =
		avgCellTempC > terms.hotTempC
			? `; ${fmtTemp(avgCellTempC)} is beyond the ${fmtTemp(terms.hotTempC)} hot point, so the fit is extrapolated`
			: '';
	return {
		cycles,
		derated: true,
		factor,
		activationEnergyJPerMol: ea,
		reason:
			`At an average cell temperature of ${fmtTemp(avgCellTempC)} the rated cycles derate from ` +
			`${fmt(terms.ratedCycles, 0)} to ${fmtCycles(cycles)} (Arrhenius fit through ${fmt(terms.ratedCycles, 0)} at ` +
			`${fmtTemp(terms.referenceTempC)} and ${fmt(terms.hotRatedCycles, 0)} at ${fmtTemp(terms.hotTempC)}, ` +
			`Ea ${fmt(ea / 1000, 1)} kJ/mol)${beyond}.`
	};
}

// ---------------------------------------------------------------------------
// Cycles and capacity (REFERENCES §2)

/**
 * Equivalent full cycles on the energy basis: throughput ÷ usable energy. This is the basis
 * Packledger assesses claims on. 1 433 600 Wh over 14 336 Wh = 100.0.
 */
export function equivalentFullCycles({
	throughputWh,
	usableWh
}: {
	throughputWh: number;
	usableWh: number;
}): number {
	if (!(usableWh > 0)) throw new RangeError('Usable energy must be positive.');
	if (!(throughputWh >= 0)) throw new RangeError('Throughput must not be negative.');
	return throughputWh / usableWh;
}

/**
 * Equivalent full cycles on the charge basis: (Ah in + Ah out) / (2 × rated Ah).
 * Kept for comparing with BMS counters that use it; NOT the basis of claim assessment,
 * because the two bases differ (150 000 + 142 000 Ah over 280 Ah = 521.43).
 */
export function equivalentFullCyclesChargeBasis(
	ahIn: number,
	ahOut: number,
	ratedAh: number
): number {
	if (!(ratedAh > 0)) throw new RangeError('Rated capacity must be positive.');
	if (!(ahIn >= 0 && ahOut >= 0)) throw new RangeError('Charge throughput must not be negative.');
	return (ahIn + ahOut) / (2 * ratedAh);
}

/** Capacity retention (state of health by capacity), %: 252 Ah of 280 Ah = 90.0 %. */
export function capacityRetentionPct(measuredAh: number, ratedAh: number): number {
	if (!(ratedAh > 0)) throw new RangeError('Rated capacity must be positive.');
	if (!(measuredAh >= 0)) throw new RangeError('Measured capacity must not be negative.');
	return (measuredAh / ratedAh) * 100;
}

/**
 * Retention the terms promise after `cycles`: linear from 100 % at 0 cycles to
 * endRetentionPct at the (derated) rated cycles, held at endRetentionPct beyond them.
 */
export function promisedRetentionPct(
	endRetentionPct: number,
	cycles: number,
	deratedRatedCycles: number
): number {
	if (!(deratedRatedCycles > 0)) throw new RangeError('Rated cycles must be positive.');
	if (!(cycles >= 0)) throw new RangeError('Cycles must not be negative.');
	const used = Math.min(cycles / deratedRatedCycles, 1);
	return 100 - (100 - endRetentionPct) * used;
}

// ---------------------------------------------------------------------------
// Term

/** Reads a 'YYYY-MM-DD' calendar date; throws on anything else (e.g. 2023-02-30). */
function parseDay(s: string, label: string): Date {
	const d = /^\d{4}-\d{2}-\d{2}$/.test(s) ? parseISO(s) : new Date(NaN);
	if (!isValid(d) || format(d, 'yyyy-MM-dd') !== s)
		throw new RangeError(`${label} must be a date as YYYY-MM-DD, got "${s}".`);
	return d;
}

/**
 * Last day of the warranty: commissioning date + `years` (date-fns addYears, so a
 * 29 February start ends on 28 February). A claim on that day is within the term.
 */
export function warrantyTermEnd(commissionedOn: string, years: number): string {
	return format(addYears(parseDay(commissionedOn, 'Commissioning date'), years), 'yyyy-MM-dd');
}

/**
 * Years from `from` to `to`: whole anniversaries (by addYears) plus the fraction of the
 * year in progress by days, so the term's last day gives exactly `years`.
 */
export function yearsBetween(from: string, to: string): number {
	const a = parseDay(from, 'Start date');
	const b = parseDay(to, 'End date');
	if (b < a) throw new RangeError(`${to} is before ${from}.`);
	let whole = Math.max(0, b.getFullYear() - a.getFullYear() - 1);
	while (addYears(a, whole + 1) <= b) whole++;
	const start = addYears(a, whole);
	const span = differenceInCalendarDays(addYears(a, whole + 1), start);
	return whole + differenceInCalendarDays(b, start) / span;
}

// ---------------------------------------------------------------------------
// Claim assessment

export type ClaimRecommendation = 'cover' | 'decline' | 'need-evidence';

export interface ClaimInput {
	terms: WarrantyTerms;
	commissionedOn: string | null;
	claimedOn: string;
	ratedCapacityAh: number;
	measuredCapacityAh?: number | null;
	usableWh: number;
	throughputWh?: number | null;
	/** Cycle count from the BMS, taken as equivalent full cycles when no throughput is given. */
	cycles?: number | null;
	avgCellTempC?: number | null;
	stopChargeProven?: boolean | null;
	/** Descriptions of events, or just how many. */
	eventsOutsideLimits?: string[] | number | null;
}

export interface ClaimAssessment {
	recommendation: ClaimRecommendation;
	withinTerm: boolean | null;
	/** 3 decimals. */
	yearsElapsed: number | null;
	termEndsOn: string | null;
	/** 2 decimals. */
	equivalentFullCycles: number | null;
	cycleBasis: 'throughput' | 'count' | null;
	/** 2 decimals. */
	deratedRatedCycles: number;
	/** 3 decimals. */
	activationEnergyKJPerMol: number;
	/** 2 decimals. */
	retentionPct: number | null;
	/** 2 decimals; null when the cycles are unknown. */
	promisedRetentionPct: number | null;
	/** Sentences with their numbers, for the claims officer. */
	reasons: string[];
}

const given = (x: number | null | undefined): x is number =>
	typeof x === 'number' && Number.isFinite(x);

/**
 * Recommends cover, decline or a request for evidence. Decisions use full precision;
 * returned numbers are rounded (2 decimals for % and cycles, 3 for years). A decline
 * that holds whatever missing evidence would show (past term, past cycles, retention at
 * or above the promise) wins over need-evidence. Events outside limits and an unproven
 * stop-charge signal are listed for the officer to weigh and never change the result.
 */
export function assessClaim(input: ClaimInput): ClaimAssessment {
	const { terms } = input;
	const reasons: string[] = [];
	parseDay(input.claimedOn, 'Claim date');

	// Term
	let withinTerm: boolean | null = null;
	let yearsElapsed: number | null = null;
	let termEndsOn: string | null = null;
	if (input.commissionedOn) {
		termEndsOn = warrantyTermEnd(input.commissionedOn, terms.years);
		yearsElapsed = yearsBetween(input.commissionedOn, input.claimedOn);
		withinTerm = input.claimedOn <= termEndsOn;
		const term = `${fmt(terms.years, 0)}-year term from commissioning on ${input.commissionedOn}`;
		reasons.push(
			withinTerm
				? `The claim of ${input.claimedOn} is ${fmt(yearsElapsed, 2)} years into the ${term}, which runs to ${termEndsOn}.`
				: `The claim of ${input.claimedOn} is ${fmt(yearsElapsed, 2)} years after commissioning on ${input.commissionedOn}, past the ${fmt(terms.years, 0)}-year term that ended on ${termEndsOn}.`
		);
	} else {
		reasons.push(
			'No commissioning date is on record, so the warranty term cannot be checked: ask for the commissioning record.'
		);
	}

	// Cycles
	let efc: number | null = null;
	let cycleBasis: ClaimAssessment['cycleBasis'] = null;
	if (given(input.throughputWh)) {
		efc = equivalentFullCycles({ throughputWh: input.throughputWh, usableWh: input.usableWh });
		cycleBasis = 'throughput';
		let s = `Discharge throughput of ${fmt(input.throughputWh, 0)} Wh over ${fmt(input.usableWh, 0)} Wh usable gives ${fmtCycles(efc)} equivalent full cycles (energy basis).`;
		if (given(input.cycles))
			s += ` The reported count of ${fmtCycles(input.cycles)} cycles was not used: the throughput takes precedence.`;
		reasons.push(s);
	} else if (given(input.cycles)) {
		if (input.cycles < 0) throw new RangeError('Cycles must not be negative.');
		efc = input.cycles;
		cycleBasis = 'count';
		reasons.push(
			`No energy throughput was given, so the reported count of ${fmtCycles(efc)} cycles is taken as equivalent full cycles.`
		);
	} else {
		reasons.push(
			'Neither energy throughput nor a cycle count was given: ask for the inverter log or the BMS cycle counter.'
		);
	}

	// Derating
	const derating = deratedCycles(terms, given(input.avgCellTempC) ? input.avgCellTempC : null);
	reasons.push(derating.reason);
	const pastCycles = efc !== null && efc > derating.cycles;
	if (efc !== null) {
		const [e, d] = fmtDistinct(efc, derating.cycles, efc >= 100 ? 0 : 1);
		reasons.push(
			pastCycles
				? `${e} equivalent full cycles exceed the ${d} rated cycles, so the cycle warranty is used up.`
				: `${e} equivalent full cycles are within the ${d} rated cycles.`
		);
	}

	// Retention
	const promised =
		efc !== null ? promisedRetentionPct(terms.endRetentionPct, efc, derating.cycles) : null;
	let retention: number | null = null;
	if (given(input.measuredCapacityAh)) {
		retention = capacityRetentionPct(input.measuredCapacityAh, input.ratedCapacityAh);
		const of = `(${fmt(input.measuredCapacityAh, 1)} Ah of ${fmt(input.ratedCapacityAh, 1)} Ah)`;
		if (promised !== null && efc !== null) {
			const [r, p] = fmtDistinct(retention, promised, 1);
			const at = `at ${fmtCycles(efc)} equivalent full cycles`;
			reasons.push(
				retention < promised
					? `Retention ${r} % ${of} is below the ${p} % promised ${at}.`
					: `Retention ${r} % ${of} is at or above the ${p} % promised ${at}: the module performs as warranted.`
			);
		} else {
			reasons.push(
				`Retention is ${fmt(retention, 1)} % ${of}; without the cycles the promised retention cannot be set.`
			);
		}
	} else {
		reasons.push('No measured capacity was given: ask for a capacity test report.');
	}

	// For the officer to weigh; never decisive here.
	const events = input.eventsOutsideLimits;
	if (Array.isArray(events) && events.length > 0) {
		reasons.push(
			`${events.length} ${events.length === 1 ? 'event' : 'events'} outside the operating limits ${events.length === 1 ? 'was' : 'were'} reported (${events.join('; ')}): weigh whether ${events.length === 1 ? 'it' : 'they'} contributed.`
		);
	} else if (typeof events === 'number' && events > 0) {
		reasons.push(
			`${fmt(events, 0)} ${events === 1 ? 'event' : 'events'} outside the operating limits ${events === 1 ? 'was' : 'were'} reported: weigh whether ${events === 1 ? 'it' : 'they'} contributed.`
		);
	}
	if (input.stopChargeProven !== true) {
		reasons.push(
			'The stop-charge signal was not proven at commissioning: weigh whether overcharge contributed.'
		);
	}

	const meetsPromise = retention !== null && promised !== null && retention >= promised;
	let recommendation: ClaimRecommendation;
	if (withinTerm === false || pastCycles || meetsPromise) recommendation = 'decline';
	else if (withinTerm === null || efc === null || retention === null)
		recommendation = 'need-evidence';
	else recommendation = 'cover';

	return {
		recommendation,
		withinTerm,
		yearsElapsed: yearsElapsed === null ? null : round(yearsElapsed, 3),
		termEndsOn,
		equivalentFullCycles: efc === null ? null : round(efc, 2),
		cycleBasis,
		deratedRatedCycles: round(derating.cycles, 2),
		activationEnergyKJPerMol: round(derating.activationEnergyJPerMol / 1000, 3),
		retentionPct: retention === null ? null : round(retention, 2),
		promisedRetentionPct: promised === null ? null : round(promised, 2),
		reasons
	};
}

// ---------------------------------------------------------------------------
// Text formatting: numbers grouped by spaces (9 120), units after a space (55 °C, 72.4 %).

function fmt(x: number, decimals: number): string {
	const [int, frac] = Math.abs(x).toFixed(decimals).split('.');
	const grouped = int.length > 3 ? int.replace(/\B(?=(\d{3})+(?!\d))/g, ' ') : int;
	const sign = x < 0 && Number(x.toFixed(decimals)) !== 0 ? '−' : '';
	return sign + grouped + (frac ? `.${frac}` : '');
}

const fmtTemp = (c: number): string => `${fmt(c, Number.isInteger(c) ? 0 : 1)} °C`;

const fmtCycles = (n: number): string => fmt(n, n >= 100 ? 0 : 1);

/**
 * Formats two compared numbers with enough decimals that they read differently when they
 * differ, so a sentence never says "85.1 % is below the 85.1 % promised".
 */
function fmtDistinct(a: number, b: number, decimals: number): [string, string] {
	for (let d = decimals; d < decimals + 4; d++) {
		const pair: [string, string] = [fmt(a, d), fmt(b, d)];
		if (pair[0] !== pair[1] || a === b) return pair;
	}
	return [fmt(a, decimals + 4), fmt(b, decimals + 4)];
}
