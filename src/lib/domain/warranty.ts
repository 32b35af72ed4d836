/**
 * Warranty assessment for TC-HC modules: term, equivalent full cycles, temperature
 * derating (Arrhenius, with the mean kinetic temperature of a logged profile) and promised
 * capacity retention. Pure: dates arrive as 'YYYY-MM-DD' strings, nothing reads the clock.
 * Sources: IEC 61434 (C-rate), the Arrhenius equation with R from CODATA 2018, Haynes (1971)
 * and USP ⟨1160⟩ for mean kinetic temperature, IEC 61960-3 for the capacity reference
 * temperature; tests/domain/warranty.test.ts names the check values.
 */
import { addYears, differenceInCalendarDays, format, isValid, parseISO } from 'date-fns';
import type { WarrantyTerms } from './model';
import { NEUTRAL } from './format';

/** Molar gas constant, J/(mol·K). CODATA 2018; exact in the 2019 SI. */
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
// Arrhenius

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

/** One stretch of a temperature log: the cell temperature and how long it lasted. */
export interface TemperatureSpan {
	tempC: number;
	hours: number;
}

/** Most spans a profile may have (an hourly log of eleven years fits). */
export const MAX_PROFILE_SPANS = 100_000;

/**
 * Mean kinetic temperature (Haynes, J. Pharm. Sci. 60 (1971) 927; the form of USP ⟨1160⟩),
 * time-weighted: T_mk = (Ea/R) / −ln(Σ tᵢ·exp(−Ea/(R·Tᵢ)) / Σ tᵢ), T in K. The single
 * temperature that ages the cells as much as the whole profile does, under Arrhenius
 * kinetics with the given activation energy; always at or above the plain time-weighted mean.
 * The sum is taken as a log-sum-exp so that no term underflows.
 */
export function meanKineticTempC(profile: readonly TemperatureSpan[], eaJPerMol: number): number {
	if (!(eaJPerMol > 0)) throw new RangeError('The activation energy must be positive.');
	if (profile.length === 0) throw new RangeError('The temperature profile is empty.');
	if (profile.length > MAX_PROFILE_SPANS)
		throw new RangeError(`A temperature profile may have at most ${MAX_PROFILE_SPANS} spans.`);
	let total = 0;
	let xMin = Infinity;
	const xs = profile.map((p) => {
		if (!(Number.isFinite(p.hours) && p.hours >= 0))
			throw new RangeError('Each span of the temperature profile needs hours of 0 or more.');
		const x = eaJPerMol / (R_GAS * toKelvin(p.tempC));
		total += p.hours;
		if (p.hours > 0) xMin = Math.min(xMin, x);
		return x;
	});
	if (!(total > 0)) throw new RangeError('The temperature profile covers no time.');
	let acc = 0;
	profile.forEach((p, i) => {
		if (p.hours > 0) acc += (p.hours / total) * Math.exp(-(xs[i] - xMin));
	});
	const lnMean = -xMin + Math.log(acc);
	return eaJPerMol / R_GAS / -lnMean - KELVIN_OFFSET;
}

/** The plain time-weighted mean of a profile, °C (what MKT replaces). */
export function timeWeightedMeanC(profile: readonly TemperatureSpan[]): number {
	let total = 0;
	let sum = 0;
	for (const p of profile) {
		total += p.hours;
		sum += p.hours * p.tempC;
	}
	if (!(total > 0)) throw new RangeError('The temperature profile covers no time.');
	return sum / total;
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
 * Rated cycles at the cell temperature (a logged average, or the mean kinetic temperature
 * of a profile, named by `label`). At or below the reference temperature, or when the
 * temperature is unknown, the rated cycles apply unchanged: the terms promise no more life
 * for cooler operation, and an unknown temperature is not held against the owner. Above
 * the hot point the fit is extrapolated, and the reason says so.
 */
export function deratedCycles(
	terms: WarrantyTerms,
	cellTempC: number | null,
	label = 'average cell temperature'
): DeratedCycles {
	const ea = fitActivationEnergy(
		terms.referenceTempC,
		terms.ratedCycles,
		terms.hotTempC,
		terms.hotRatedCycles
	);
	const rated = `${fmt(terms.ratedCycles, 0)} cycles rated at ${fmtTemp(terms.referenceTempC)}`;
	if (cellTempC === null || !Number.isFinite(cellTempC)) {
		return {
			cycles: terms.ratedCycles,
			derated: false,
			factor: 1,
			activationEnergyJPerMol: ea,
			reason: `No ${label} was given, so the ${rated} are used without derating.`
		};
	}
	if (cellTempC <= terms.referenceTempC) {
		return {
			cycles: terms.ratedCycles,
			derated: false,
			factor: 1,
			activationEnergyJPerMol: ea,
			reason: `The ${label} of ${fmtTemp(cellTempC)} is at or below the ${fmtTemp(terms.referenceTempC)} reference, so the ${rated} apply without derating.`
		};
	}
	const factor = arrheniusFactor(ea, terms.referenceTempC, cellTempC);
	const cycles = terms.ratedCycles / factor;
	const beyond =
		cellTempC > terms.hotTempC
			? `; ${fmtTemp(cellTempC)} is beyond the ${fmtTemp(terms.hotTempC)} hot point, so the fit is extrapolated`
			: '';
	return {
		cycles,
		derated: true,
		factor,
		activationEnergyJPerMol: ea,
		reason:
			`At ${/^[aeiou]/.test(label) ? 'an' : 'a'} ${label} of ${fmtTemp(cellTempC)} the rated cycles derate from ` +
			`${fmt(terms.ratedCycles, 0)} to ${fmtCycles(cycles)} (Arrhenius fit through ${fmt(terms.ratedCycles, 0)} at ` +
			`${fmtTemp(terms.referenceTempC)} and ${fmt(terms.hotRatedCycles, 0)} at ${fmtTemp(terms.hotTempC)}, ` +
			`Ea ${fmt(ea / 1000, 1)} kJ/mol)${beyond}.`
	};
}

// ---------------------------------------------------------------------------
// Cycles and capacity (IEC 61434; energy-basis equivalent full cycles)

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

/**
 * Capacity is rated at 20 ± 5 °C (IEC 61960-3 reference conditions, from memory); a test
 * outside the band is weighed, and a cold one (which reads low) asks for a repeat.
 */
export const CAPACITY_REFERENCE_C = 20;
export const CAPACITY_REFERENCE_TOLERANCE_C = 5;
/**
 * Default uncertainty of a field capacity test, % of the reading (common practice: test
 * sets quote about ±0.5–1 % of reading; the field adds more). Configurable per request.
 */
export const DEFAULT_CAPACITY_UNCERTAINTY_PCT = 1;

export interface ClaimInput {
	terms: WarrantyTerms;
	commissionedOn: string | null;
	claimedOn: string;
	ratedCapacityAh: number;
	measuredCapacityAh?: number | null;
	/** Cell temperature during the capacity test, °C. */
	measuredAtC?: number | null;
	usableWh: number;
	throughputWh?: number | null;
	/** Cycle count from the BMS, taken as equivalent full cycles when no throughput is given. */
	cycles?: number | null;
	avgCellTempC?: number | null;
	/** Time at each cell temperature from the log; when given it sets the temperature (MKT). */
	temperatureProfile?: readonly TemperatureSpan[] | null;
	/** Uncertainty of the capacity test, % of the reading (default 1 %). */
	capacityUncertaintyPct?: number | null;
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
	/** The cell temperature the derating used, °C (2 decimals): the profile's MKT or the average. */
	effectiveCellTempC: number | null;
	temperatureBasis: 'profile' | 'average' | null;
	/** Exactly the hundredths the comparison used (2 decimals). */
	retentionPct: number | null;
	/** Exactly the hundredths the comparison used (2 decimals); null when the cycles are unknown. */
	promisedRetentionPct: number | null;
	/** Retention and promise are compared in steps of this many percentage points. */
	retentionPrecisionPct: number;
	/** ± percentage points the capacity test's uncertainty spans (2 decimals). */
	measurementMarginPct: number | null;
	/** Sentences with their numbers, for the claims officer. */
	reasons: string[];
}

const given = (x: number | null | undefined): x is number =>
	typeof x === 'number' && Number.isFinite(x);

// ---------------------------------------------------------------------------
// Exact decimals for the comparisons: every input is taken as the decimal it prints as
// (256.2 is 2562/10, not the nearest binary double), so 256.2 Ah of 280 Ah is exactly
// 91.5 % and ties with a promised 91.5 %.

interface Dec {
	n: bigint;
	d: bigint;
}
const TEN = BigInt(10);
function dec(x: number): Dec {
	if (!Number.isFinite(x)) throw new RangeError(`${x} is not a finite number.`);
	const [mant, expPart] = String(x).toLowerCase().split('e');
	const neg = mant.startsWith('-');
	const [int, frac = ''] = (neg ? mant.slice(1) : mant).split('.');
	let n = BigInt(int + frac) * (neg ? BigInt(-1) : BigInt(1));
	let d = TEN ** BigInt(frac.length);
	const e = Number(expPart ?? 0);
	if (e > 0) n *= TEN ** BigInt(e);
	else if (e < 0) d *= TEN ** BigInt(-e);
	return { n, d };
}
const mul = (a: Dec, b: Dec): Dec => ({ n: a.n * b.n, d: a.d * b.d });
const div = (a: Dec, b: Dec): Dec =>
	b.n < BigInt(0) ? { n: -a.n * b.d, d: a.d * -b.n } : { n: a.n * b.d, d: a.d * b.n };
const sub = (a: Dec, b: Dec): Dec => ({ n: a.n * b.d - b.n * a.d, d: a.d * b.d });
const cmp = (a: Dec, b: Dec): number => {
	const x = a.n * b.d - b.n * a.d;
	return x > BigInt(0) ? 1 : x < BigInt(0) ? -1 : 0;
};
const minDec = (a: Dec, b: Dec): Dec => (cmp(a, b) <= 0 ? a : b);
/** Rounds to whole hundredths, half away from zero: 91.495 → 9150. */
function hundredths(a: Dec): bigint {
	const num = a.n * BigInt(100);
	const neg = num < BigInt(0);
	const abs = neg ? -num : num;
	const q = (abs * BigInt(2) + a.d) / (a.d * BigInt(2));
	return neg ? -q : q;
}
const fmtHundredths = (h: bigint): string => {
	const neg = h < BigInt(0);
	const abs = neg ? -h : h;
	const frac = (abs % BigInt(100)).toString().padStart(2, '0');
	return `${neg ? '−' : ''}${fmt(Number(abs / BigInt(100)), 0)}.${frac}`;
};

/**
 * Recommends cover, decline or a request for evidence. Retention and the promised retention
 * are compared in whole hundredths of a percentage point, each rounded half away from zero
 * in exact decimal arithmetic, and the sentences print exactly those hundredths; the
 * returned numbers are the same hundredths. Cycles against the rated cycles are compared
 * exactly too. A decline that holds whatever missing evidence would show (past term, past
 * cycles, retention at or above the promise) wins over need-evidence. Events outside
 * limits, an unproven stop-charge signal, a capacity test away from the reference
 * temperature and a retention within the test's uncertainty of the promise are listed for
 * the officer to weigh and never change the result.
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
	let efcDec: Dec | null = null;
	let cycleBasis: ClaimAssessment['cycleBasis'] = null;
	if (given(input.throughputWh)) {
		efc = equivalentFullCycles({ throughputWh: input.throughputWh, usableWh: input.usableWh });
		efcDec = div(dec(input.throughputWh), dec(input.usableWh));
		cycleBasis = 'throughput';
		let s = `Discharge throughput of ${fmt(input.throughputWh, 0)} Wh over ${fmt(input.usableWh, 0)} Wh usable gives ${fmtCycles(efc)} equivalent full cycles (energy basis).`;
		if (given(input.cycles))
			s += ` The reported count of ${fmtCycles(input.cycles)} cycles was not used: the throughput takes precedence.`;
		reasons.push(s);
	} else if (given(input.cycles)) {
		if (input.cycles < 0) throw new RangeError('Cycles must not be negative.');
		efc = input.cycles;
		efcDec = dec(input.cycles);
		cycleBasis = 'count';
		reasons.push(
			`No energy throughput was given, so the reported count of ${fmtCycles(efc)} cycles is taken as equivalent full cycles.`
		);
	} else {
		reasons.push(
			'Neither energy throughput nor a cycle count was given: ask for the inverter log or the BMS cycle counter.'
		);
	}

	// Temperature: the log's profile (mean kinetic temperature) before a typed average.
	const ea = fitActivationEnergy(
		terms.referenceTempC,
		terms.ratedCycles,
		terms.hotTempC,
		terms.hotRatedCycles
	);
	let effectiveCellTempC: number | null = null;
	let temperatureBasis: ClaimAssessment['temperatureBasis'] = null;
	let tempLabel = 'average cell temperature';
	const profile = input.temperatureProfile?.filter((p) => p.hours > 0) ?? [];
	if (profile.length) {
		effectiveCellTempC = meanKineticTempC(profile, ea);
		temperatureBasis = 'profile';
		tempLabel = 'mean kinetic cell temperature';
		const hours = profile.reduce((a, p) => a + p.hours, 0);
		const plain = timeWeightedMeanC(profile);
		let s = `The log's cell temperatures over ${fmt(hours, 0)} hours, weighted by time and by how fast cells age at each (mean kinetic temperature, Haynes 1971, with the terms' Ea of ${fmt(ea / 1000, 1)} kJ/mol), give ${fmt(effectiveCellTempC, 1)} °C; their plain mean is ${fmt(plain, 1)} °C.`;
		if (given(input.avgCellTempC))
			s += ` The typed average of ${fmtTemp(input.avgCellTempC)} was not used: the log takes precedence.`;
		reasons.push(s);
	} else if (given(input.avgCellTempC)) {
		effectiveCellTempC = input.avgCellTempC;
		temperatureBasis = 'average';
	}
	const derating = deratedCycles(terms, effectiveCellTempC, tempLabel);
	reasons.push(derating.reason);
	const deratedDec = derating.derated ? dec(derating.cycles) : dec(terms.ratedCycles);
	const pastCycles = efcDec !== null && cmp(efcDec, deratedDec) > 0;
	if (efc !== null) {
		const [e, d] = fmtDistinct(efc, derating.cycles, efc >= 100 ? 0 : 1);
		reasons.push(
			pastCycles
				? `${e} equivalent full cycles exceed the ${d} rated cycles, so the cycle warranty is used up.`
				: `${e} equivalent full cycles are within the ${d} rated cycles.`
		);
	}

	// Retention, compared in exact hundredths of a percentage point.
	const hundred = dec(100);
	const promisedH =
		efcDec !== null
			? hundredths(
					sub(
						hundred,
						mul(sub(hundred, dec(terms.endRetentionPct)), minDec(div(efcDec, deratedDec), dec(1)))
					)
				)
			: null;
	let retentionH: bigint | null = null;
	let marginH: bigint | null = null;
	if (given(input.measuredCapacityAh)) {
		if (!(input.ratedCapacityAh > 0)) throw new RangeError('Rated capacity must be positive.');
		if (input.measuredCapacityAh < 0)
			throw new RangeError('Measured capacity must not be negative.');
		const retention = mul(div(dec(input.measuredCapacityAh), dec(input.ratedCapacityAh)), hundred);
		retentionH = hundredths(retention);
		const uPct = given(input.capacityUncertaintyPct)
			? input.capacityUncertaintyPct
			: DEFAULT_CAPACITY_UNCERTAINTY_PCT;
		if (!(uPct >= 0 && uPct <= 20))
			throw new RangeError(
				'The capacity test uncertainty must be between 0 and 20 % of the reading.'
			);
		marginH = hundredths(div(mul(retention, dec(uPct)), hundred));
		const of = `(${fmt(input.measuredCapacityAh, 1)} Ah of ${fmt(input.ratedCapacityAh, 1)} Ah)`;
		const r = fmtHundredths(retentionH);
		if (promisedH !== null && efc !== null) {
			const p = fmtHundredths(promisedH);
			const at = `at ${fmtCycles(efc)} equivalent full cycles`;
			reasons.push(
				retentionH < promisedH
					? `Retention ${r} % ${of} is below the ${p} % promised ${at}.`
					: `Retention ${r} % ${of} is at or above the ${p} % promised ${at}: the module performs as warranted.`
			);
			const gap = retentionH > promisedH ? retentionH - promisedH : promisedH - retentionH;
			if (marginH > BigInt(0) && gap <= marginH)
				reasons.push(
					`The difference of ${fmtHundredths(gap)} percentage points is within the ±${fmtHundredths(marginH)} points the capacity test can be trusted to (${fmt(uPct, 1)} % of the reading): a repeat test could land on the other side of the promise. Weigh that before deciding.`
				);
		} else {
			reasons.push(
				`Retention is ${r} % ${of}; without the cycles the promised retention cannot be set.`
			);
		}
		const band = `${fmt(CAPACITY_REFERENCE_C, 0)} ± ${fmt(CAPACITY_REFERENCE_TOLERANCE_C, 0)} °C reference band (IEC 61960-3)`;
		if (given(input.measuredAtC)) {
			const t = input.measuredAtC;
			if (t < CAPACITY_REFERENCE_C - CAPACITY_REFERENCE_TOLERANCE_C)
				reasons.push(
					`The capacity was measured at ${fmtTemp(t)}, below the ${band}: a cold cell gives less capacity, so the retention may read low. Ask for a capacity test at ${fmt(CAPACITY_REFERENCE_C - CAPACITY_REFERENCE_TOLERANCE_C, 0)}–${fmt(CAPACITY_REFERENCE_C + CAPACITY_REFERENCE_TOLERANCE_C, 0)} °C before deciding.`
				);
			else if (t > CAPACITY_REFERENCE_C + CAPACITY_REFERENCE_TOLERANCE_C)
				reasons.push(
					`The capacity was measured at ${fmtTemp(t)}, above the ${band}: a warm cell gives more capacity, so the retention may read high.`
				);
			else reasons.push(`The capacity was measured at ${fmtTemp(t)}, within the ${band}.`);
		} else {
			reasons.push(
				`The capacity test's temperature was not given; capacity is rated within the ${band}.`
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

	const meetsPromise = retentionH !== null && promisedH !== null && retentionH >= promisedH;
	let recommendation: ClaimRecommendation;
	if (withinTerm === false || pastCycles || meetsPromise) recommendation = 'decline';
	else if (withinTerm === null || efc === null || retentionH === null)
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
		effectiveCellTempC: effectiveCellTempC === null ? null : round(effectiveCellTempC, 2),
		temperatureBasis,
		retentionPct: retentionH === null ? null : Number(retentionH) / 100,
		promisedRetentionPct: promisedH === null ? null : Number(promisedH) / 100,
		retentionPrecisionPct: 0.01,
		measurementMarginPct: marginH === null ? null : Number(marginH) / 100,
		reasons
	};
}

// ---------------------------------------------------------------------------
// Text formatting: numbers grouped as every page groups them (NEUTRAL: 9,120), a true minus
// sign for a negative figure, units after a space (55 °C, 72.4 %).

function fmt(x: number, decimals: number): string {
	const sign = x < 0 && Number(x.toFixed(decimals)) !== 0 ? '−' : '';
	return sign + NEUTRAL.fixed(Math.abs(x), decimals);
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
