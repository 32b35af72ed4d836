/**
 * Commissioning evaluation: each checklist item pass / fail / not measured, with the
 * reason in words and numbers. Pure; the technician's measurements come in, nothing is
 * read from the database or the clock. Thresholds that are rules of thumb are parameters.
 */
import { currentForCRate, type ModelSpec } from './model';
import { insulationRequirement, minOvercurrentRatingA } from './electrical';

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
>;

export interface CommissioningSystem {
	series: number;
	parallel: number;
	model: CommissioningModel;
	/**
	 * Continuous current the system is set up for (e.g. limited by the inverter);
	 * defaults to maxContinuousC × ratedAh × parallel.
	 */
	maxContinuousA?: number;
	/** Circuit nominal voltage for the insulation band; defaults to the string's nominal voltage. */
	circuitNominalV?: number;
	/** The DC circuit is built as SELV/PELV (IEC 60364-6 Table 6.1 first row). */
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
	protectiveDevice?: { ratingA: number; dcVoltageRatingV: number } | null;
	ambientC?: number | null;
	stopChargeProven?: boolean | null;
}

export interface CommissioningThresholds {
	/** Largest OCV spread between modules, V. 50 mV: common practice. */
	maxModuleOcvSpreadV: number;
	/** String voltage vs the sum of its modules: within this fraction… (1 %, common practice) */
	stringSumTolerancePct: number;
	/** …or this many volts, whichever is larger (0.5 V, common practice). */
	stringSumToleranceV: number;
	/** Largest difference between parallel strings before joining, V. 1.0 V: common practice. */
	maxInterStringDiffV: number;
}

export const DEFAULT_COMMISSIONING_THRESHOLDS: CommissioningThresholds = {
	maxModuleOcvSpreadV: 0.05,
	stringSumTolerancePct: 1,
	stringSumToleranceV: 0.5,
	maxInterStringDiffV: 1.0
};

export type CommissioningItemKey =
	| 'module_ocv_spread'
	| 'string_voltage'
	| 'inter_string_difference'
	| 'insulation'
	| 'polarity'
	| 'torque'
	| 'protective_device'
	| 'ambient_temperature'
	| 'stop_charge';

export type CommissioningStatus = 'pass' | 'fail' | 'not_measured';

export interface CommissioningItem {
	key: CommissioningItemKey;
	label: string;
	status: CommissioningStatus;
	reason: string;
}

export interface CommissioningResult {
	items: CommissioningItem[];
	overall: 'pass' | 'fail' | 'incomplete';
}

const num = (x: number, maxDigits = 2, minDigits = 1) =>
	x.toLocaleString('en-US', {
		minimumFractionDigits: minDigits,
		maximumFractionDigits: maxDigits,
		useGrouping: false
	});
const V = (x: number) => `${num(x, 2)} V`;
const mV = (x: number) => `${Math.round(x * 1000)} mV`;
const roundMv = (x: number) => Math.round(x * 1000) / 1000;
const isNum = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);

type Ctx = {
	system: CommissioningSystem;
	m: CommissioningMeasurements;
	t: CommissioningThresholds;
	stringMin: number;
	stringNominal: number;
	stringMax: number;
};
type Outcome = Omit<CommissioningItem, 'key' | 'label'>;
const pass = (reason: string): Outcome => ({ status: 'pass', reason });
const fail = (reason: string): Outcome => ({ status: 'fail', reason });
const missing = (reason: string): Outcome => ({ status: 'not_measured', reason });

/** Module OCVs limited to the system's shape; null where the shape disagrees. */
function moduleGrid({ system, m }: Ctx): (number | null)[][] | null {
	const grid = m.moduleOcvV;
	if (!grid || grid.length !== system.parallel || grid.some((row) => row.length !== system.series))
		return null;
	return grid.map((row) => row.map((v) => (isNum(v) ? v : null)));
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
	const values = grid.flat().filter(isNum);
	const lo = Math.min(...values);
	const hi = Math.max(...values);
	const spread = hi - lo;
	const limit = `the ${mV(t.maxModuleOcvSpreadV)} limit (common practice)`;
	if (spread > t.maxModuleOcvSpreadV + 1e-9) {
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
	const { system, m, t, stringMin, stringMax } = ctx;
	const strings = m.stringVoltageV ?? [];
	if (!strings.some(isNum)) return missing('No string voltages recorded.');
	const grid = moduleGrid(ctx);
	const failures: string[] = [];
	const gaps: string[] = [];
	for (let i = 0; i < system.parallel; i++) {
		const label = `String ${i + 1}`;
		const measured = strings[i];
		if (!isNum(measured)) {
			gaps.push(`${label} voltage not recorded`);
			continue;
		}
		if (measured < stringMin || measured > stringMax) {
			failures.push(
				`${label} reads ${V(measured)}, outside the model's ${V(stringMin)} to ${V(stringMax)}`
			);
			continue;
		}
		const row = grid?.[i];
		if (!row || row.some((v) => v === null)) {
			gaps.push(`${label}: module voltages incomplete, no sum to compare`);
			continue;
		}
		const sum = row.reduce<number>((a, v) => a + (v as number), 0);
		const tolerance = Math.max((t.stringSumTolerancePct / 100) * sum, t.stringSumToleranceV);
		const diff = Math.abs(measured - sum);
		if (diff > tolerance + 1e-9) {
			failures.push(
				`${label} reads ${V(measured)} against ${V(sum)} summed from its modules, ` +
					`${V(diff)} apart (allowed ${V(tolerance)}: ${t.stringSumTolerancePct} % or ${V(t.stringSumToleranceV)}, common practice)`
			);
		}
	}
	if (failures.length > 0) {
		return fail(`${failures.join('; ')}: check connections and each module before energising.`);
	}
	if (gaps.length > 0) return missing(`${gaps.join('; ')}.`);
	return pass(
		`Each of ${system.parallel} string voltages matches the sum of its modules within ` +
			`${t.stringSumTolerancePct} % or ${V(t.stringSumToleranceV)} (common practice).`
	);
}

function checkInterString(ctx: Ctx): Outcome {
	const { system, m, t } = ctx;
	if (system.parallel === 1) return pass('Single string: there are no parallel strings to join.');
	const limit = `the ${V(t.maxInterStringDiffV)} limit before paralleling (common practice)`;
	let diff: number;
	let source: string;
	if (isNum(m.interStringDiffV)) {
		diff = m.interStringDiffV;
		source = 'measured';
	} else {
		const strings = (m.stringVoltageV ?? []).slice(0, system.parallel);
		if (strings.length < system.parallel || !strings.every(isNum)) {
			return missing(
				'Difference between strings not recorded, and not every string voltage is known to derive it.'
			);
		}
		diff = Math.max(...strings) - Math.min(...strings);
		source = 'from the string voltages';
	}
	if (diff > t.maxInterStringDiffV + 1e-9) {
		return fail(
			`Strings differ by ${V(diff)} (${source}), above ${limit}: ` +
				`bring them to the same voltage before closing the string isolators.`
		);
	}
	return pass(`Strings differ by ${V(diff)} (${source}), within ${limit}.`);
}

function checkInsulation(ctx: Ctx): Outcome {
	const { system, m, stringNominal } = ctx;
	const circuitV = system.circuitNominalV ?? stringNominal;
	const req = insulationRequirement(circuitV, { selvPelv: system.selvPelv });
	const src = 'IEC 60364-6 Table 6.1';
	const circuit = system.selvPelv ? 'a SELV/PELV circuit' : `a ${V(circuitV)} nominal circuit`;
	const ins = m.insulation;
	if (!ins || !isNum(ins.measuredMohm) || !isNum(ins.testVoltageV)) {
		return missing(
			`Insulation resistance not recorded; ${src} asks for at least ${num(req.minMohm, 2)} MΩ at ` +
				`${req.testVoltageV} V DC for ${circuit}.`
		);
	}
	if (ins.testVoltageV < req.testVoltageV) {
		return fail(
			`Insulation was tested at ${ins.testVoltageV} V, below the ${req.testVoltageV} V DC test voltage ${src} ` +
				`requires for ${circuit}: repeat the test at ${req.testVoltageV} V.`
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
			`${num(req.minMohm, 2)} MΩ minimum of ${src} for ${circuit}.`
	);
}

function checkConfirmation(value: boolean | null | undefined, what: string): Outcome {
	if (value === true) return pass(`${what} confirmed.`);
	if (value === false) return fail(`${what} not confirmed: correct it before energising.`);
	return missing(`${what} not recorded.`);
}

function checkProtectiveDevice(ctx: Ctx): Outcome {
	const { system, m, stringMax } = ctx;
	const dev = m.protectiveDevice;
	const continuousA =
		system.maxContinuousA ??
		currentForCRate(system.model.maxContinuousC, system.model.ratedAh) * system.parallel;
	const minA = minOvercurrentRatingA(continuousA);
	const rule =
		'125 % of the continuous current (NEC 210.20 / 706.30 style, from memory; local codes decide)';
	if (!dev || !isNum(dev.ratingA) || !isNum(dev.dcVoltageRatingV)) {
		return missing(
			`Protective device not recorded; it needs at least ${num(minA, 1)} A and ${V(stringMax)} DC.`
		);
	}
	const faults: string[] = [];
	if (dev.ratingA < minA - 1e-9) {
		faults.push(
			`rated ${num(dev.ratingA, 1)} A, below ${num(minA, 1)} A = ${rule} of ${num(continuousA, 1)} A`
		);
	}
	if (dev.dcVoltageRatingV < stringMax) {
		faults.push(
			`DC voltage rating ${V(dev.dcVoltageRatingV)} is below the string maximum ${V(stringMax)}`
		);
	}
	if (faults.length > 0) return fail(`Protective device ${faults.join('; ')}.`);
	return pass(
		`Protective device ${num(dev.ratingA, 1)} A / ${V(dev.dcVoltageRatingV)} DC covers ${num(minA, 1)} A ` +
			`(${rule}) and the ${V(stringMax)} string maximum.`
	);
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
	{ key: 'ambient_temperature', label: 'Ambient temperature', run: checkAmbient },
	{
		key: 'stop_charge',
		label: 'Stop-charge signal',
		run: (c) => checkConfirmation(c.m.stopChargeProven, 'Stop-charge signal reaching the inverter')
	}
];

/**
 * Evaluates the commissioning checklist. Overall is pass only when every item passes,
 * fail when any item fails, otherwise incomplete.
 */
export function evaluateCommissioning(
	system: CommissioningSystem,
	measurements: CommissioningMeasurements,
	thresholds: Partial<CommissioningThresholds> = {}
): CommissioningResult {
	const cells = system.series * system.model.cellsSeries;
	const ctx: Ctx = {
		system,
		m: measurements,
		t: { ...DEFAULT_COMMISSIONING_THRESHOLDS, ...thresholds },
		// Rounded to the millivolt so 24 × 2.75 V is 66 V, not 66.00000000000001 V.
		stringMin: roundMv(cells * system.model.cellMinV),
		stringNominal: roundMv(cells * system.model.cellNominalV),
		stringMax: roundMv(cells * system.model.cellMaxV)
	};
	const items = CHECKS.map(({ key, label, run }) => ({ key, label, ...run(ctx) }));
	const overall = items.some((i) => i.status === 'fail')
		? 'fail'
		: items.every((i) => i.status === 'pass')
			? 'pass'
			: 'incomplete';
	return { items, overall };
}
