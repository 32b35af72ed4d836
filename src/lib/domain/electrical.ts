/**
 * Small electrical formulas shared by the design check and commissioning evaluation.
 * Each names its source; rules of thumb say "common practice", unverified recollections
 * say "from memory" (see docs/references.md §2, §4, §9).
 */

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
}

/**
 * Minimum insulation resistance and DC test voltage by circuit, IEC 60364-6:2016
 * Table 6.1 (same as BS 7671:2018 Table 64):
 * SELV/PELV 250 V / 0.5 MΩ; up to and including 500 V: 500 V / 1.0 MΩ;
 * above 500 V: 1000 V / 1.0 MΩ. The band follows the circuit type, so SELV/PELV is a
 * flag, not a voltage; 500 V is in the middle row and 501 V in the last.
 */
export function insulationRequirement(
	circuitNominalV: number,
	options: { selvPelv?: boolean } = {}
): InsulationRequirement {
	requirePositive('Circuit nominal voltage', circuitNominalV);
	if (options.selvPelv) return { testVoltageV: 250, minMohm: 0.5, band: 'selv_pelv' };
	if (circuitNominalV <= 500) return { testVoltageV: 500, minMohm: 1.0, band: 'up_to_500v' };
	return { testVoltageV: 1000, minMohm: 1.0, band: 'above_500v' };
}

/**
 * Smallest overcurrent device rating for a continuous current: 125 % of it.
 * US NEC 210.20 / 706.30 style rule, FROM MEMORY (not yet read in the code text);
 * local codes take precedence.
 */
export function minOvercurrentRatingA(continuousA: number): number {
	if (!Number.isFinite(continuousA) || continuousA < 0) {
		throw new RangeError(`Continuous current must be zero or positive, got ${continuousA}`);
	}
	return 1.25 * continuousA;
}

/**
 * Prospective short-circuit current of a battery ≈ U / R_internal, from memory; it
 * ignores cable and connection resistance, so it is the upper bound a device's breaking
 * capacity must exceed.
 */
export function prospectiveShortCircuitA(voltageV: number, internalResistanceOhm: number): number {
	requirePositive('Voltage', voltageV);
	requirePositive('Internal resistance', internalResistanceOhm);
	return voltageV / internalResistanceOhm;
}
