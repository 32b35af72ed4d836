/**
 * Commissioning evaluation: each checklist item pass / fail / not measured / implausible,
 * with the reason in words and numbers. Pure; the technician's measurements and the rule
 * set come in, nothing is read from the database or the clock.
 */
import { currentForCRate, type ModelSpec } from './model';
import {
	bankShortCircuitA,
	insulationRequirement,
	judgeProtection,
	type InsulationRequirement
} from './electrical';
import { NEUTRAL } from './format';

export type CommissioningModel = Pick<
	ModelSpec,
	| 'cellsSeries'
	| 'cellMinV'
	| 'cellNominalV'
	| 'cellMaxV'
	| 'ratedAh'
	| 'maxContinuousC'
	| 'chargeTempMinC'
	| 'chargeTempMaxC'
	| 'dischargeTempMinC'
	| 'dischargeTempMaxC'
> & {
	/** DC internal resistance of one module, mΩ (data sheet or factory-test mean); null when unknown. */
	internalResistanceMOhm?: number | null;
};

export interface CommissioningSystem {
	series: number;
	parallel: number;
	model: CommissioningModel;
	/**
	 * Continuous current the system is set up for (e.g. limited by the inverter);
	 * defaults to maxContinuousC × ratedAh × parallel.
	 */
	maxContinuousA?: number;
	/** Highest voltage of the circuit for the insulation band; defaults to the string maximum. */
	circuitMaxV?: number;
	/** The DC circuit is built as SELV/PELV (IEC 60364-6 Table 6.1 first row; only up to 120 V DC). */
	selvPelv?: boolean;
}

export interface CommissioningMeasurements {
	/** Open-circuit voltage per module: [string][position], null where not measured. */
	moduleOcvV?: (number | null)[][] | null;
	/** Measured voltage per string, null where not measured. */
	stringVoltageV?: (number | null)[] | null;
	/** Largest voltage difference between parallel strings before joining; derived from stringVoltageV if absent. */
	interStringDiffV?: number | null;
	insulation?: { testVoltageV: number | null; measuredMohm: number | null } | null;
	polarityChecked?: boolean | null;
	torqueConfirmed?: boolean | null;
	protectiveDevice?: {
		ratingA: number | null;
		dcVoltageRatingV: number | null;
		breakingCapacityKA: number | null;
	} | null;
	/** With parallel strings: does each string have its own overcurrent device? */
	stringProtection?: boolean | null;
	ambientC?: number | null;
	stopChargeProven?: boolean | null;
}

/** The limits a commissioning is judged by; a rule set the assembler maintains carries them. */
export interface CommissioningLimits {
	/**
	 * Largest open-circuit voltage difference between any two modules, V (50 mV, common
	 * practice). The one rule behind both voltage limits: a string of S modules may then
	 * differ from another by at most S × this, so for one-module strings the two agree.
	 */
	moduleOcvToleranceV: number;
	/** String voltage vs the sum of its modules: within this fraction… (1 %, common practice) */
	stringSumTolerancePct: number;
	/** …or this many volts, whichever is larger (0.5 V, common practice). */
	stringSumToleranceV: number;
	/** Protective device current rating at least this × the continuous current (1.25, NEC style, from memory). */
	overcurrentFactor: number;
	/**
	 * A voltage reading above this × the highest the circuit can produce, or below
	 * `implausibleBelowFactor` × the lowest, is implausible (a typo or a wrong range) and
	 * blocks submission (1.2 and 0.5, common practice).
	 */
	implausibleAboveFactor: number;
	implausibleBelowFactor: number;
}

/** The text each verdict cites; the certificate prints it beside the limit. */
export interface CommissioningCitations {
	moduleVoltages: string;
	stringSum: string;
	insulation: string;
	overcurrent: string;
	voltageRating: string;
	breakingCapacity: string;
	stringProtection: string;
	plausibility: string;
}

export interface CommissioningRuleSet {
	name: string;
	market: string;
	version: number;
	/** ISO calendar day from which the set applies. */
	effectiveFrom: string;
	limits: CommissioningLimits;
	citations: CommissioningCitations;
}

export const DEFAULT_COMMISSIONING_LIMITS: CommissioningLimits = {
	moduleOcvToleranceV: 0.05,
	stringSumTolerancePct: 1,
	stringSumToleranceV: 0.5,
	overcurrentFactor: 1.25,
	implausibleAboveFactor: 1.2,
	implausibleBelowFactor: 0.5
};

/** Citations of the default rule set: "common practice" where no standard was read, "from memory" where one was recalled. */
export const DEFAULT_COMMISSIONING_CITATIONS: CommissioningCitations = {
	moduleVoltages: 'common practice',
	stringSum: 'common practice',
	insulation: 'IEC 60364-6:2016 Table 6.1, row by the circuit’s highest voltage',
	overcurrent: 'common practice (US NEC 210.20 / 706.30 style, from memory)',
	voltageRating: 'common practice (IEC 60947-2 / IEC 60269 DC ratings, from memory)',
	breakingCapacity:
		'common practice (IEC 60947-2 / IEC 60269 DC ratings; fault current per IEC 61660-1, from memory)',
	stringProtection: 'common practice',
	plausibility: 'common practice'
};

export const DEFAULT_RULE_SET: CommissioningRuleSet = {
	name: 'Default (common practice)',
	market: 'default',
	version: 1,
	effectiveFrom: '2020-01-01',
	limits: DEFAULT_COMMISSIONING_LIMITS,
	citations: DEFAULT_COMMISSIONING_CITATIONS
};

export type CommissioningItemKey =
	| 'module_ocv_spread'
	| 'string_voltage'
	| 'inter_string_difference'
	| 'insulation'
	| 'polarity'
	| 'torque'
	| 'protective_device'
	| 'string_protection'
	| 'ambient_temperature'
	| 'stop_charge';

/** `implausible`: a reading the system cannot produce (a typo); it blocks submission. */
export type CommissioningStatus = 'pass' | 'fail' | 'not_measured' | 'implausible';

export interface CommissioningItem {
	key: CommissioningItemKey;
	label: string;
	status: CommissioningStatus;
	reason: string;
}

export interface CommissioningResult {
	items: CommissioningItem[];
	overall: 'pass' | 'fail' | 'incomplete';
	/** Implausible readings in words; while any is listed the checklist cannot be submitted. */
	implausible: string[];
	/** The bank's prospective short-circuit current, A; null when the module's internal resistance is unknown. */
	shortCircuitA: number | null;
	/** The derived limit between parallel strings: series × module tolerance, V. */
	interStringLimitV: number;
	insulation: InsulationRequirement;
}

/** A reading in a message: at least `minDigits`, at most `maxDigits` fraction digits, grouped as pages group. */
const num = (x: number, maxDigits = 2, minDigits = 1) => NEUTRAL.decimal(x, minDigits, maxDigits);
const V = (x: number) => `${num(x, 2)} V`;
const mV = (x: number) => `${Math.round(x * 1000)} mV`;
const roundMv = (x: number) => Math.round(x * 1000) / 1000;
const isNum = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);

type Ctx = {
	system: CommissioningSystem;
	m: CommissioningMeasurements;
	t: CommissioningLimits;
	cite: CommissioningCitations;
	moduleMin: number;
	moduleNominal: number;
	moduleMax: number;
	stringMin: number;
	stringNominal: number;
	stringMax: number;
	interStringLimitV: number;
	shortCircuitA: number | null;
	insulation: InsulationRequirement;
};
type Outcome = Omit<CommissioningItem, 'key' | 'label'>;
const pass = (reason: string): Outcome => ({ status: 'pass', reason });
const fail = (reason: string): Outcome => ({ status: 'fail', reason });
const missing = (reason: string): Outcome => ({ status: 'not_measured', reason });
const implausibleOutcome = (reasons: string[]): Outcome => ({
	status: 'implausible',
	reason: `${reasons.join(' ')} This reading cannot be submitted until it is corrected.`
});

/**
 * "about 100 times" / "about 1/10 of" / "about 3.2 times": how far a reading is from what
 * was expected; `decimalSlip` when the ratio is near a power of ten (a misplaced decimal point).
 */
function howFar(value: number, expected: number): { text: string; decimalSlip: boolean } {
	if (value <= 0) return { text: 'far below', decimalSlip: false };
	const r = value / expected;
	const decade = Math.round(Math.log10(r));
	if (decade !== 0 && Math.abs(Math.log10(r) - decade) < 0.15)
		return {
			text: decade > 0 ? `about ${10 ** decade} times` : `about 1/${10 ** -decade} of`,
			decimalSlip: true
		};
	return { text: `about ${num(r, r >= 1 ? 1 : 2)} times`, decimalSlip: false };
}

/**
 * Null when a voltage reading lies within what the circuit can produce (with the rule set's
 * margins); otherwise the words that call it implausible, with the expected value.
 */
export function implausibleReading(
	what: string,
	value: number,
	expected: number,
	lowest: number,
	highest: number,
	limits: Pick<CommissioningLimits, 'implausibleAboveFactor' | 'implausibleBelowFactor'>
): string | null {
	const above = value > highest * limits.implausibleAboveFactor;
	const below = value < lowest * limits.implausibleBelowFactor;
	if (!above && !below) return null;
	const { text: far, decimalSlip } = howFar(value, expected);
	const advice = decimalSlip
		? 'check the decimal point'
		: above
			? 'check the meter range and the reading'
			: 'check the meter, its leads and the connection';
	return (
		`${what}: ${num(value, 3, 0)} V is ${far} the ${V(expected)} expected ` +
		`(the circuit can only produce ${V(lowest)} to ${V(highest)}) — ${advice}.`
	);
}

/** Module OCVs limited to the system's shape; null where the shape disagrees. */
function moduleGrid({ system, m }: Ctx): (number | null)[][] | null {
	const grid = m.moduleOcvV;
	if (!grid || grid.length !== system.parallel || grid.some((row) => row.length !== system.series))
		return null;
	return grid.map((row) => row.map((v) => (isNum(v) ? v : null)));
}

function moduleImplausible(ctx: Ctx): string[] {
	const grid = moduleGrid(ctx);
	if (!grid) return [];
	const out: string[] = [];
	grid.forEach((row, s) =>
		row.forEach((v, p) => {
			if (v === null) return;
			const why = implausibleReading(
				`String ${s + 1} position ${p + 1}`,
				v,
				ctx.moduleNominal,
				ctx.moduleMin,
				ctx.moduleMax,
				ctx.t
			);
			if (why) out.push(why);
		})
	);
	return out;
}

/** What a string should read: the sum of its module readings when all are in, else its nominal voltage. */
export function expectedStringV(
	series: number,
	model: CommissioningModel,
	moduleReadings: (number | null | undefined)[] | null | undefined
): { expectedV: number; basis: 'modules' | 'nominal' } {
	const readings = (moduleReadings ?? []).slice(0, series);
	if (readings.length === series && readings.every(isNum))
		return { expectedV: roundMv(readings.reduce((a, v) => a + v, 0)), basis: 'modules' };
	return { expectedV: roundMv(series * model.cellsSeries * model.cellNominalV), basis: 'nominal' };
}

function checkModuleSpread(ctx: Ctx): Outcome {
	const { system, m, t } = ctx;
	const expected = system.series * system.parallel;
	if (!m.moduleOcvV || m.moduleOcvV.every((row) => row.every((v) => !isNum(v)))) {
		return missing('No module open-circuit voltages recorded.');
	}
	const grid = moduleGrid(ctx);
	if (!grid) {
		return missing(
			`Module voltages are recorded for ${m.moduleOcvV.length} strings of ` +
				`${m.moduleOcvV.map((r) => r.length).join('/')} modules, but the system has ` +
				`${system.parallel} strings of ${system.series}: re-enter them per string and position.`
		);
	}
	const wild = moduleImplausible(ctx);
	if (wild.length) return implausibleOutcome(wild);
	const values = grid.flat().filter(isNum);
	const lo = Math.min(...values);
	const hi = Math.max(...values);
	const spread = hi - lo;
	const limit = `the ${mV(t.moduleOcvToleranceV)} limit between any two modules (${ctx.cite.moduleVoltages})`;
	if (spread > t.moduleOcvToleranceV + 1e-9) {
		return fail(
			`Module open-circuit voltages range from ${V(lo)} to ${V(hi)}, a spread of ${mV(spread)}, above ${limit}: ` +
				`balance or charge the modules to the same state before joining them.`
		);
	}
	if (values.length < expected) {
		return missing(
			`${values.length} of ${expected} module voltages recorded; spread so far ${mV(spread)}.`
		);
	}
	return pass(
		`All ${expected} module open-circuit voltages lie within ${mV(spread)} (${V(lo)} to ${V(hi)}), within ${limit}.`
	);
}

function checkStringVoltage(ctx: Ctx): Outcome {
	const { system, m, t } = ctx;
	const strings = m.stringVoltageV ?? [];
	if (!strings.some(isNum)) return missing('No string voltages recorded.');
	const grid = moduleGrid(ctx);
	const wild: string[] = [];
	const failures: string[] = [];
	const gaps: string[] = [];
	for (let i = 0; i < system.parallel; i++) {
		const label = `String ${i + 1}`;
		const measured = strings[i];
		if (!isNum(measured)) {
			gaps.push(`${label} voltage not recorded`);
			continue;
		}
		const row = grid?.[i];
		const { expectedV, basis } = expectedStringV(system.series, system.model, row);
		const why = implausibleReading(
			`${label} voltage`,
			measured,
			expectedV,
			ctx.stringMin,
			ctx.stringMax,
			t
		);
		if (why) {
			wild.push(why);
			continue;
		}
		if (measured < ctx.stringMin || measured > ctx.stringMax) {
			failures.push(
				`${label} reads ${V(measured)}, outside the model's ${V(ctx.stringMin)} to ${V(ctx.stringMax)}`
			);
			continue;
		}
		if (basis !== 'modules') {
			gaps.push(`${label}: module voltages incomplete, no sum to compare`);
			continue;
		}
		const tolerance = Math.max((t.stringSumTolerancePct / 100) * expectedV, t.stringSumToleranceV);
		const diff = Math.abs(measured - expectedV);
		if (diff > tolerance + 1e-9) {
			failures.push(
				`${label} reads ${V(measured)} against ${V(expectedV)} summed from its modules, ` +
					`${V(diff)} apart (allowed ${V(tolerance)}: ${t.stringSumTolerancePct} % or ${V(t.stringSumToleranceV)}, ${ctx.cite.stringSum})`
			);
		}
	}
	if (wild.length) return implausibleOutcome(wild);
	if (failures.length > 0) {
		return fail(`${failures.join('; ')}: check connections and each module before energising.`);
	}
	if (gaps.length > 0) return missing(`${gaps.join('; ')}.`);
	return pass(
		`Each of ${system.parallel} string voltages matches the sum of its modules within ` +
			`${t.stringSumTolerancePct} % or ${V(t.stringSumToleranceV)} (${ctx.cite.stringSum}).`
	);
}

function checkInterString(ctx: Ctx): Outcome {
	const { system, m, t, interStringLimitV } = ctx;
	if (system.parallel === 1) return pass('Single string: there are no parallel strings to join.');
	const limit =
		`the ${V(interStringLimitV)} limit before paralleling: ${system.series} module${system.series === 1 ? '' : 's'} per string × ` +
		`${mV(t.moduleOcvToleranceV)}, the same rule as between modules (${ctx.cite.moduleVoltages})`;
	let diff: number;
	let source: string;
	if (isNum(m.interStringDiffV)) {
		diff = m.interStringDiffV;
		source = 'measured';
		if (diff > ctx.stringMax * t.implausibleAboveFactor)
			return implausibleOutcome([
				`Difference between strings: ${V(diff)} is more than a whole string can produce (${V(ctx.stringMax)}), ` +
					`where about ${V(interStringLimitV)} or less is expected — check the decimal point.`
			]);
	} else {
		const strings = (m.stringVoltageV ?? []).slice(0, system.parallel);
		if (strings.length < system.parallel || !strings.every(isNum)) {
			return missing(
				'Difference between strings not recorded, and not every string voltage is known to derive it.'
			);
		}
		const plausible = strings.every(
			(v) => !implausibleReading('', v, ctx.stringNominal, ctx.stringMin, ctx.stringMax, t)
		);
		if (!plausible)
			return missing(
				'Correct the implausible string voltage first; the difference follows from it.'
			);
		diff = Math.max(...strings) - Math.min(...strings);
		source = 'from the string voltages';
	}
	if (diff > interStringLimitV + 1e-9) {
		return fail(
			`Strings differ by ${V(diff)} (${source}), above ${limit}: ` +
				`bring them to the same voltage before closing the string isolators.`
		);
	}
	return pass(`Strings differ by ${V(diff)} (${source}), within ${limit}.`);
}

function checkInsulation(ctx: Ctx): Outcome {
	const { m, insulation: req } = ctx;
	const src = ctx.cite.insulation;
	const circuit =
		req.band === 'selv_pelv'
			? `a SELV/PELV circuit reaching ${V(req.byVoltageV)}`
			: `a circuit reaching ${V(req.byVoltageV)} at its highest`;
	const refused = req.selvRefused ? ` ${req.selvRefused}` : '';
	const ins = m.insulation;
	if (!ins || !isNum(ins.measuredMohm) || !isNum(ins.testVoltageV)) {
		return missing(
			`Insulation resistance not recorded; ${src} asks for at least ${num(req.minMohm, 2)} MΩ at ` +
				`${req.testVoltageV} V DC for ${circuit}.${refused}`
		);
	}
	if (ins.testVoltageV < req.testVoltageV) {
		return fail(
			`Insulation was tested at ${ins.testVoltageV} V, below the ${req.testVoltageV} V DC test voltage ${src} ` +
				`requires for ${circuit}: repeat the test at ${req.testVoltageV} V.${refused}`
		);
	}
	if (ins.measuredMohm < req.minMohm) {
		return fail(
			`Insulation ${num(ins.measuredMohm, 3)} MΩ at ${ins.testVoltageV} V is below the ` +
				`${num(req.minMohm, 2)} MΩ minimum of ${src}: find and clear the fault before energising.`
		);
	}
	return pass(
		`Insulation ${num(ins.measuredMohm, 3)} MΩ at ${ins.testVoltageV} V meets the ` +
			`${num(req.minMohm, 2)} MΩ minimum of ${src} for ${circuit}.${refused}`
	);
}

function checkConfirmation(value: boolean | null | undefined, what: string): Outcome {
	if (value === true) return pass(`${what} confirmed.`);
	if (value === false) return fail(`${what} not confirmed: correct it before energising.`);
	return missing(`${what} not recorded.`);
}

/** The continuous current the protective device carries. */
export function continuousCurrentOf(system: CommissioningSystem): number {
	return (
		system.maxContinuousA ??
		currentForCRate(system.model.maxContinuousC, system.model.ratedAh) * system.parallel
	);
}

function checkProtectiveDevice(ctx: Ctx): Outcome {
	const { system, m, t, stringMax, shortCircuitA } = ctx;
	const dev = m.protectiveDevice;
	const continuousA = continuousCurrentOf(system);
	const minA = t.overcurrentFactor * continuousA;
	const fault =
		shortCircuitA === null
			? 'a breaking capacity above the bank’s fault current (the module’s internal resistance is not on record, so it cannot be computed)'
			: `a breaking capacity of at least ${num(shortCircuitA / 1000, 1)} kA (${NEUTRAL.number(shortCircuitA)} A prospective short-circuit current)`;
	if (
		!dev ||
		!isNum(dev.ratingA) ||
		!isNum(dev.dcVoltageRatingV) ||
		!isNum(dev.breakingCapacityKA)
	) {
		return missing(
			`Protective device not fully recorded (current rating, DC voltage rating and breaking capacity); ` +
				`it needs at least ${num(minA, 1)} A, ${V(stringMax)} DC and ${fault}.`
		);
	}
	const verdict = judgeProtection(
		{
			ratedCurrentA: dev.ratingA,
			ratedVoltageDcV: dev.dcVoltageRatingV,
			breakingCapacityKA: dev.breakingCapacityKA
		},
		{ continuousA, stringMaxV: stringMax, shortCircuitA, overcurrentFactor: t.overcurrentFactor }
	);
	const cites =
		`(current rating: ${ctx.cite.overcurrent}; DC voltage rating: ${ctx.cite.voltageRating}; ` +
		`breaking capacity: ${ctx.cite.breakingCapacity})`;
	if (!verdict.fits)
		return fail(
			`Protective device ${verdict.checks
				.filter((c) => !c.ok)
				.map((c) => c.text)
				.join('; ')} ${cites}.`
		);
	return pass(`Protective device ${verdict.checks.map((c) => c.text).join('; ')} ${cites}.`);
}

function checkStringProtection(ctx: Ctx): Outcome {
	const { system, m, shortCircuitA } = ctx;
	if (system.parallel === 1)
		return pass('Single string: the battery circuit’s own device protects it.');
	const fed =
		shortCircuitA === null
			? 'all the other strings'
			: `the other ${system.parallel - 1} string${system.parallel === 2 ? '' : 's'}, up to ${NEUTRAL.number(((system.parallel - 1) / system.parallel) * shortCircuitA)} A`;
	const why = `a fault inside one string is fed by ${fed}, and only a device in that string separates it (${ctx.cite.stringProtection})`;
	if (m.stringProtection === true)
		return pass(`Each of the ${system.parallel} strings has its own overcurrent device: ${why}.`);
	if (m.stringProtection === false)
		return fail(
			`Not every string has its own overcurrent device: ${why}. Fit one per string before joining them.`
		);
	return missing(`Say whether each string has its own overcurrent device: ${why}.`);
}

/** The ambient range that allows both charge and discharge: the overlap of the two ranges. */
/**
 * The continuous current a system is set up for: the inverter's larger charge or discharge
 * limit where one is recorded, never above what the parallel strings can deliver at the
 * model's maximum continuous C-rate (I = C × Ah per string). Undefined when the inverter
 * records no limit.
 */
export function systemCurrentLimitA(s: {
	maxContinuousC: number;
	ratedAh: number;
	parallel: number;
	maxChargeA?: number | null;
	maxDischargeA?: number | null;
}): number | undefined {
	const batteryA = currentForCRate(s.maxContinuousC, s.ratedAh) * s.parallel;
	const inverterA = Math.max(s.maxChargeA ?? 0, s.maxDischargeA ?? 0);
	return inverterA > 0 ? Math.min(inverterA, batteryA) : undefined;
}

export function operatingTempRange(model: CommissioningModel): { minC: number; maxC: number } {
	return {
		minC: Math.max(model.chargeTempMinC, model.dischargeTempMinC),
		maxC: Math.min(model.chargeTempMaxC, model.dischargeTempMaxC)
	};
}

function checkAmbient(ctx: Ctx): Outcome {
	const { system, m } = ctx;
	const { minC, maxC } = operatingTempRange(system.model);
	const md = system.model;
	const basis =
		`${minC} to ${maxC} °C, the overlap of the model's charge (${md.chargeTempMinC} to ${md.chargeTempMaxC} °C) ` +
		`and discharge (${md.dischargeTempMinC} to ${md.dischargeTempMaxC} °C) ranges`;
	if (!isNum(m.ambientC))
		return missing(`Ambient temperature not recorded; it must lie within ${basis}.`);
	if (m.ambientC < minC || m.ambientC > maxC) {
		return fail(`Ambient ${num(m.ambientC, 1)} °C is outside ${basis}.`);
	}
	return pass(`Ambient ${num(m.ambientC, 1)} °C is within ${basis}.`);
}

const CHECKS: { key: CommissioningItemKey; label: string; run: (ctx: Ctx) => Outcome }[] = [
	{ key: 'module_ocv_spread', label: 'Module open-circuit voltage spread', run: checkModuleSpread },
	{ key: 'string_voltage', label: 'String voltage against its modules', run: checkStringVoltage },
	{
		key: 'inter_string_difference',
		label: 'Difference between parallel strings',
		run: checkInterString
	},
	{ key: 'insulation', label: 'Insulation resistance', run: checkInsulation },
	{
		key: 'polarity',
		label: 'Polarity',
		run: (c) => checkConfirmation(c.m.polarityChecked, 'Polarity of every connection')
	},
	{
		key: 'torque',
		label: 'Terminal torque',
		run: (c) => checkConfirmation(c.m.torqueConfirmed, 'Terminal torque to the maker\u2019s value')
	},
	{ key: 'protective_device', label: 'Protective device', run: checkProtectiveDevice },
	{ key: 'string_protection', label: 'Overcurrent device per string', run: checkStringProtection },
	{ key: 'ambient_temperature', label: 'Ambient temperature', run: checkAmbient },
	{
		key: 'stop_charge',
		label: 'Stop-charge signal',
		run: (c) => checkConfirmation(c.m.stopChargeProven, 'Stop-charge signal reaching the inverter')
	}
];

/** The figures every check shares: voltages rounded to the millivolt, fault current, insulation row. */
export function commissioningFigures(
	system: CommissioningSystem,
	limits: CommissioningLimits = DEFAULT_COMMISSIONING_LIMITS
) {
	const md = system.model;
	const cells = system.series * md.cellsSeries;
	// Rounded to the millivolt so 24 × 2.75 V is 66 V, not 66.00000000000001 V.
	const stringMax = roundMv(cells * md.cellMaxV);
	const r = md.internalResistanceMOhm;
	const shortCircuitA =
		isNum(r) && r > 0
			? Math.round(
					bankShortCircuitA({
						parallel: system.parallel,
						series: system.series,
						moduleMaxV: md.cellsSeries * md.cellMaxV,
						moduleInternalResistanceMOhm: r
					})
				)
			: null;
	return {
		moduleMin: roundMv(md.cellsSeries * md.cellMinV),
		moduleNominal: roundMv(md.cellsSeries * md.cellNominalV),
		moduleMax: roundMv(md.cellsSeries * md.cellMaxV),
		stringMin: roundMv(cells * md.cellMinV),
		stringNominal: roundMv(cells * md.cellNominalV),
		stringMax,
		interStringLimitV: roundMv(system.series * limits.moduleOcvToleranceV),
		shortCircuitA,
		insulation: insulationRequirement(system.circuitMaxV ?? stringMax, {
			selvPelv: system.selvPelv
		}),
		continuousA: continuousCurrentOf(system),
		minDeviceA: limits.overcurrentFactor * continuousCurrentOf(system)
	};
}

/**
 * Evaluates the commissioning checklist by a rule set (the default one unless given).
 * Overall is pass only when every item passes, fail when any item fails or is implausible,
 * otherwise incomplete; implausible readings are listed so the page and the server refuse
 * to submit them.
 */
export function evaluateCommissioning(
	system: CommissioningSystem,
	measurements: CommissioningMeasurements,
	rules:
		| Pick<CommissioningRuleSet, 'limits' | 'citations'>
		| { limits?: Partial<CommissioningLimits> } = DEFAULT_RULE_SET
): CommissioningResult {
	const t = { ...DEFAULT_COMMISSIONING_LIMITS, ...(rules.limits ?? {}) };
	const cite =
		'citations' in rules && rules.citations ? rules.citations : DEFAULT_COMMISSIONING_CITATIONS;
	const figures = commissioningFigures(system, t);
	const ctx: Ctx = { system, m: measurements, t, cite, ...figures };
	const items = CHECKS.map(({ key, label, run }) => ({ key, label, ...run(ctx) }));
	const overall = items.some((i) => i.status === 'fail' || i.status === 'implausible')
		? 'fail'
		: items.every((i) => i.status === 'pass')
			? 'pass'
			: 'incomplete';
	return {
		items,
		overall,
		implausible: items.filter((i) => i.status === 'implausible').map((i) => i.reason),
		shortCircuitA: figures.shortCircuitA,
		interStringLimitV: figures.interStringLimitV,
		insulation: figures.insulation
	};
}

/** What the checklist shows before anything is measured (see blankPreview). */
export interface BlankPreview {
	result: CommissioningResult;
	/** A string's expected voltage while no module reading is in: its nominal voltage. */
	nominalStringV: number;
	ambient: { minC: number; maxC: number };
}

/**
 * The checklist's preview with nothing measured, worked out where the page's data is made
 * (the server's load, or the phone's offline copy), so the page paints without this module;
 * the page fetches it with the first reading typed and evaluates from then on.
 */
export function blankPreview(
	system: CommissioningSystem,
	rules: Parameters<typeof evaluateCommissioning>[2] = DEFAULT_RULE_SET
): BlankPreview {
	return {
		result: evaluateCommissioning(system, {}, rules),
		nominalStringV: expectedStringV(system.series, system.model, null).expectedV,
		ambient: operatingTempRange(system.model)
	};
}

export interface ReadingRow {
	group: string;
	what: string;
	value: string;
	limit: string;
}

/**
 * Every individual reading with the limit it was judged by, for the certificate: module
 * voltages, string voltages, the inter-string difference, insulation, the protective device
 * and the ambient temperature.
 */
export function readingsTable(
	system: CommissioningSystem,
	m: CommissioningMeasurements,
	rules: Pick<CommissioningRuleSet, 'limits'> = DEFAULT_RULE_SET
): ReadingRow[] {
	const t = { ...DEFAULT_COMMISSIONING_LIMITS, ...rules.limits };
	const f = commissioningFigures(system, t);
	const show = (x: number | null | undefined, unit: string, digits = 2) =>
		isNum(x) ? `${num(x, digits, Math.min(1, digits))} ${unit}` : 'not measured';
	const rows: ReadingRow[] = [];
	const grid = m.moduleOcvV ?? [];
	for (let s = 0; s < system.parallel; s++)
		for (let p = 0; p < system.series; p++)
			rows.push({
				group: 'Module open-circuit voltage',
				what: `String ${s + 1}, position ${p + 1}`,
				value: show(grid[s]?.[p], 'V'),
				limit: `${V(f.moduleMin)} to ${V(f.moduleMax)}; all within ${mV(t.moduleOcvToleranceV)}`
			});
	for (let s = 0; s < system.parallel; s++) {
		const { expectedV, basis } = expectedStringV(system.series, system.model, grid[s]);
		const tol = Math.max((t.stringSumTolerancePct / 100) * expectedV, t.stringSumToleranceV);
		rows.push({
			group: 'String voltage',
			what: `String ${s + 1}`,
			value: show(m.stringVoltageV?.[s], 'V'),
			limit:
				basis === 'modules'
					? `${V(expectedV)} ± ${V(tol)} (sum of its modules)`
					: `${V(f.stringMin)} to ${V(f.stringMax)}`
		});
	}
	if (system.parallel > 1) {
		const strings = (m.stringVoltageV ?? []).slice(0, system.parallel);
		const derived =
			strings.length === system.parallel && strings.every(isNum)
				? Math.max(...(strings as number[])) - Math.min(...(strings as number[]))
				: null;
		rows.push({
			group: 'Between strings',
			what: isNum(m.interStringDiffV)
				? 'Largest difference (measured)'
				: 'Largest difference (from string voltages)',
			value: show(isNum(m.interStringDiffV) ? m.interStringDiffV : derived, 'V'),
			limit: `at most ${V(f.interStringLimitV)}`
		});
	}
	rows.push(
		{
			group: 'Insulation',
			what: 'Test voltage',
			value: show(m.insulation?.testVoltageV, 'V', 0),
			limit: `at least ${f.insulation.testVoltageV} V DC`
		},
		{
			group: 'Insulation',
			what: 'Insulation resistance',
			value: show(m.insulation?.measuredMohm, 'MΩ', 3),
			limit: `at least ${num(f.insulation.minMohm, 2)} MΩ`
		},
		{
			group: 'Protective device',
			what: 'Current rating',
			value: show(m.protectiveDevice?.ratingA, 'A', 1),
			limit: `at least ${num(f.minDeviceA, 1)} A`
		},
		{
			group: 'Protective device',
			what: 'DC voltage rating',
			value: show(m.protectiveDevice?.dcVoltageRatingV, 'V', 1),
			limit: `at least ${V(f.stringMax)}`
		},
		{
			group: 'Protective device',
			what: 'Breaking capacity',
			value: show(m.protectiveDevice?.breakingCapacityKA, 'kA', 1),
			limit:
				f.shortCircuitA === null
					? 'above the fault current (not computable)'
					: `at least ${num(f.shortCircuitA / 1000, 1)} kA (${NEUTRAL.number(f.shortCircuitA)} A)`
		}
	);
	const { minC, maxC } = operatingTempRange(system.model);
	rows.push({
		group: 'Ambient',
		what: 'Temperature at the battery',
		value: show(m.ambientC, '°C', 1),
		limit: `${minC} to ${maxC} °C`
	});
	return rows;
}
