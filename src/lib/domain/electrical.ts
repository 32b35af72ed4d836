/**
 * Small electrical formulas shared by the design check and commissioning evaluation.
 * Each names its source; rules of thumb say "common practice", unverified recollections
 * say "from memory" (see docs/references.md §2, §4, §9).
 */
import { NEUTRAL } from './format';

function requirePositive(name: string, value: number): void {
	if (!Number.isFinite(value) || value <= 0) {
		throw new RangeError(`${name} must be a positive number, got ${value}`);
	}
}

/**
 * Ideal minutes for a full charge or discharge at a C-rate: 60 / n.
 * The C-rate counts multiples of the reference current I_t = C_n / 1 h (IEC 61434);
 * "10C takes about 6 minutes" is common practice and ignores taper and losses.
 */
export function chargeMinutesAtC(cRate: number): number {
	requirePositive('C-rate', cRate);
	return 60 / cRate;
}

/** Energy in Wh = V_nominal × Ah (docs/references.md §2: 16 × 3.2 V × 280 Ah = 14 336 Wh). */
export function energyWh(nominalV: number, ah: number): number {
	requirePositive('Nominal voltage', nominalV);
	requirePositive('Capacity', ah);
	return nominalV * ah;
}

/** Resistivity of copper at 20 °C, Ω·m (Cutnell & Johnson, Physics, Table 20.1). */
export const COPPER_RESISTIVITY_OHM_M = 1.72e-8;

export interface VoltageDropInput {
	currentA: number;
	/** Cable run one way; the loop (out and back) is twice this. */
	oneWayLengthM: number;
	/** Conductor cross-section in mm². */
	areaMm2: number;
	/** Defaults to copper at 20 °C. */
	resistivityOhmM?: number;
}

/**
 * DC voltage drop over a two-conductor run: V_d = I × 2L × ρ / A
 * (R = ρL/A, Cutnell & Johnson Table 20.1 for ρ_Cu). 5 m, 100 A, 35 mm² → 0.4914 V.
 */
export function voltageDropV({
	currentA,
	oneWayLengthM,
	areaMm2,
	resistivityOhmM = COPPER_RESISTIVITY_OHM_M
}: VoltageDropInput): number {
	if (!Number.isFinite(currentA) || currentA < 0) {
		throw new RangeError(`Current must be zero or positive, got ${currentA}`);
	}
	requirePositive('Length', oneWayLengthM);
	requirePositive('Cross-section', areaMm2);
	requirePositive('Resistivity', resistivityOhmM);
	const areaM2 = areaMm2 * 1e-6;
	return (currentA * 2 * oneWayLengthM * resistivityOhmM) / areaM2;
}

export type InsulationBand = 'selv_pelv' | 'up_to_500v' | 'above_500v';

export interface InsulationRequirement {
	testVoltageV: number;
	minMohm: number;
	band: InsulationBand;
	/** The voltage the band was chosen by: the highest the circuit reaches in service. */
	byVoltageV: number;
	/** Set when the circuit was called SELV/PELV but reaches more than 120 V DC, so that row was refused. */
	selvRefused?: string;
}

/** Highest ripple-free DC voltage of an extra-low-voltage (SELV/PELV) circuit (IEC 60364-4-41 §414, IEC 61140; from memory). */
export const SELV_DC_LIMIT_V = 120;

/**
 * Minimum insulation resistance and DC test voltage, IEC 60364-6:2016 Table 6.1 (same as
 * BS 7671:2018 Table 64): SELV/PELV 250 V / 0.5 MΩ; up to and including 500 V: 500 V /
 * 1.0 MΩ; above 500 V: 1000 V / 1.0 MΩ. The row is chosen by the highest voltage the
 * circuit reaches in service (the string maximum, not its nominal voltage): the
 * conservative reading, since a 465 V nominal string reaches 545 V. The SELV/PELV row is a
 * matter of how the circuit is built, and is accepted only up to 120 V DC.
 */
export function insulationRequirement(
	circuitMaxV: number,
	options: { selvPelv?: boolean } = {}
): InsulationRequirement {
	requirePositive('Circuit maximum voltage', circuitMaxV);
	let selvRefused: string | undefined;
	if (options.selvPelv) {
		if (circuitMaxV <= SELV_DC_LIMIT_V)
			return { testVoltageV: 250, minMohm: 0.5, band: 'selv_pelv', byVoltageV: circuitMaxV };
		selvRefused = `The circuit reaches ${circuitMaxV} V DC, above the ${SELV_DC_LIMIT_V} V limit of SELV/PELV, so the SELV/PELV row does not apply.`;
	}
	const row =
		circuitMaxV <= 500
			? { testVoltageV: 500, minMohm: 1.0, band: 'up_to_500v' as const }
			: { testVoltageV: 1000, minMohm: 1.0, band: 'above_500v' as const };
	return { ...row, byVoltageV: circuitMaxV, ...(selvRefused ? { selvRefused } : {}) };
}

/**
 * Smallest overcurrent device rating for a continuous current: `factor` (1.25) times it.
 * US NEC 210.20 / 706.30 style rule, FROM MEMORY (not yet read in the code text);
 * local codes take precedence, and the rule set may set another factor.
 */
export function minOvercurrentRatingA(continuousA: number, factor = 1.25): number {
	if (!Number.isFinite(continuousA) || continuousA < 0) {
		throw new RangeError(`Continuous current must be zero or positive, got ${continuousA}`);
	}
	requirePositive('Overcurrent factor', factor);
	return factor * continuousA;
}

/**
 * Prospective short-circuit current of a battery ≈ U / R_internal: the battery as a voltage
 * source behind its internal resistance (IEC 61660-1, from memory until read). It ignores
 * cable and connection resistance, so it is the upper bound a device's breaking capacity
 * must reach.
 */
export function prospectiveShortCircuitA(voltageV: number, internalResistanceOhm: number): number {
	requirePositive('Voltage', voltageV);
	requirePositive('Internal resistance', internalResistanceOhm);
	return voltageV / internalResistanceOhm;
}

/**
 * The bank's prospective short-circuit current at its terminals: P strings of S modules,
 * each string S × U_max behind S × R_module, all strings in parallel, so
 * I_k = P × U_module,max / R_module (S cancels; cable resistance neglected: conservative).
 * Worked example: 2 strings of modules with 16.5 V maximum and 2.0 mΩ → 16 500 A.
 */
export function bankShortCircuitA(bank: {
	parallel: number;
	series: number;
	moduleMaxV: number;
	moduleInternalResistanceMOhm: number;
}): number {
	requirePositive('Strings in parallel', bank.parallel);
	requirePositive('Modules in series', bank.series);
	const stringV = bank.series * bank.moduleMaxV;
	const stringOhm = (bank.series * bank.moduleInternalResistanceMOhm) / 1000;
	return bank.parallel * prospectiveShortCircuitA(stringV, stringOhm);
}

export interface ProtectiveDevice {
	ratedCurrentA: number;
	ratedVoltageDcV: number;
	breakingCapacityKA: number;
}

export interface ProtectionDuty {
	/** Continuous current the device carries. */
	continuousA: number;
	/** Highest string voltage (all cells at their maximum). */
	stringMaxV: number;
	/** Prospective short-circuit current the device must break; null when the module's internal resistance is unknown. */
	shortCircuitA: number | null;
	/** Factor on the continuous current (1.25 by default). */
	overcurrentFactor?: number;
}

export interface ProtectionVerdict {
	fits: boolean;
	/** Each failure in words with its numbers; empty when the device fits. */
	problems: string[];
	/** The three checks, each with its numbers, for a certificate or a screen. */
	checks: { key: 'current' | 'voltage' | 'breaking'; ok: boolean; text: string }[];
}

const f1 = (x: number) => (Math.round(x * 10) / 10).toString();
const kA = (a: number) => `${(Math.round(a / 100) / 10).toFixed(1)} kA`;

/**
 * Judges a protective device against its duty: current rating at least the factor × the
 * continuous current (NEC 210.20 / 706.30 style, from memory), DC voltage rating at or above
 * the string maximum, and breaking capacity at or above the prospective short-circuit
 * current (IEC 60947-2 / IEC 60269 DC ratings, from memory). Ties pass.
 */
export function judgeProtection(device: ProtectiveDevice, duty: ProtectionDuty): ProtectionVerdict {
	const factor = duty.overcurrentFactor ?? 1.25;
	const minA = minOvercurrentRatingA(duty.continuousA, factor);
	const checks: ProtectionVerdict['checks'] = [];
	const pct = `${f1(factor * 100)} %`;
	checks.push(
		device.ratedCurrentA + 1e-9 >= minA
			? {
					key: 'current',
					ok: true,
					text: `rated ${f1(device.ratedCurrentA)} A, at least ${f1(minA)} A (${pct} of ${f1(duty.continuousA)} A continuous)`
				}
			: {
					key: 'current',
					ok: false,
					text: `rated ${f1(device.ratedCurrentA)} A, below ${f1(minA)} A (${pct} of ${f1(duty.continuousA)} A continuous): choose a device rated ${f1(minA)} A or more`
				}
	);
	checks.push(
		device.ratedVoltageDcV + 1e-9 >= duty.stringMaxV
			? {
					key: 'voltage',
					ok: true,
					text: `DC voltage rating ${f1(device.ratedVoltageDcV)} V, at or above the ${f1(duty.stringMaxV)} V string maximum`
				}
			: {
					key: 'voltage',
					ok: false,
					text: `DC voltage rating ${f1(device.ratedVoltageDcV)} V, below the ${f1(duty.stringMaxV)} V string maximum: choose a device rated for at least ${f1(duty.stringMaxV)} V DC`
				}
	);
	if (duty.shortCircuitA === null) {
		checks.push({
			key: 'breaking',
			ok: false,
			text: `breaking capacity ${f1(device.breakingCapacityKA)} kA cannot be judged: the module's internal resistance is not on record`
		});
	} else {
		const breakingA = device.breakingCapacityKA * 1000;
		checks.push(
			breakingA + 1e-6 >= duty.shortCircuitA
				? {
						key: 'breaking',
						ok: true,
						text: `breaking capacity ${f1(device.breakingCapacityKA)} kA, at or above the ${kA(duty.shortCircuitA)} (${NEUTRAL.number(duty.shortCircuitA)} A) prospective short-circuit current`
					}
				: {
						key: 'breaking',
						ok: false,
						text: `breaking capacity ${f1(device.breakingCapacityKA)} kA, below the ${kA(duty.shortCircuitA)} (${NEUTRAL.number(duty.shortCircuitA)} A) the bank can deliver into a short circuit: the device could fail to break the fault; choose one rated to break at least ${kA(duty.shortCircuitA)} DC`
					}
		);
	}
	const problems = checks.filter((c) => !c.ok).map((c) => `Protective device ${c.text}.`);
	return { fits: problems.length === 0, problems, checks };
}
