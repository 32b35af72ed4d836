/**
 * System design check: modules in series × strings in parallel against an inverter's
 * DC window, and suggestions of variant × series × parallel for a target energy.
 * Pure: no SvelteKit, database or clock. Inputs are validated by
 * `designCheckInputSchema` (src/lib/schemas/design-check.ts) before they reach here.
 */
import { currentForCRate, type ModelSpec } from './model';

/** The module data the check needs; a subset of ModelSpec. */
export type DesignModule = Pick<
	ModelSpec,
	| 'cellsSeries'
	| 'cellMinV'
	| 'cellNominalV'
	| 'cellMaxV'
	| 'ratedAh'
	| 'usableWh'
	| 'maxContinuousC'
	| 'burstC'
>;

export interface InverterWindow {
	/** DC window the inverter operates in. */
	minV: number;
	maxV: number;
	/** Narrower range the maker recommends (full power, best efficiency); optional. */
	preferredMinV?: number;
	preferredMaxV?: number;
	maxChargeA?: number;
	maxDischargeA?: number;
}

export interface DesignVariant {
	code: string;
	module: DesignModule;
}

export interface DesignCheckInput {
	module: DesignModule;
	series: number;
	parallel: number;
	inverter: InverterWindow;
	targetEnergyKWh?: number;
	variants?: DesignVariant[];
}

export interface StringVoltage {
	min: number;
	nominal: number;
	max: number;
}

export interface DesignSuggestion {
	code: string;
	series: number;
	parallel: number;
	/** Usable energy (usableWh basis), kWh. */
	energyKWh: number;
	stringVoltage: StringVoltage;
	fitsPreferred: boolean;
}

export interface DesignCheckResult {
	stringVoltage: StringVoltage;
	/** Usable energy: module usableWh × series × parallel (not nominal V × Ah). */
	energyKWh: number;
	continuousCurrentA: number;
	burstCurrentA: number;
	/** At nominal string voltage. */
	continuousPowerKW: number;
	burstPowerKW: number;
	fitsWindow: boolean;
	fitsPreferred: boolean;
	problems: string[];
	suggestions: DesignSuggestion[];
}

export interface DesignCheckOptions {
	/**
	 * Parallel strings above this draw a caution: current sharing and fault current
	 * grow with every string. Common practice (makers often allow 4–8), not a standard.
	 */
	maxParallelStrings?: number;
	/** Largest parallel count tried for suggestions. */
	maxSuggestionParallel?: number;
	/** How many suggestions to return. */
	suggestionCount?: number;
}

/** The energy basis every figure here uses: the module's usable Wh. */
export const DESIGN_ENERGY_BASIS = 'usable' as const;
export const DEFAULT_MAX_PARALLEL_STRINGS = 8;
const MAX_SERIES = 64;

const round = (x: number, digits: number) => {
	const f = 10 ** digits;
	return Math.round(x * f) / f;
};
const v1 = (x: number) => `${x.toFixed(1)} V`;
const a1 = (x: number) => `${x.toFixed(1)} A`;

/** String voltage at min / nominal / max cell voltage, rounded to the millivolt. */
export function stringVoltageOf(module: DesignModule, series: number): StringVoltage {
	const cells = series * module.cellsSeries;
	return {
		min: round(cells * module.cellMinV, 3),
		nominal: round(cells * module.cellNominalV, 3),
		max: round(cells * module.cellMaxV, 3)
	};
}

/** Usable energy of series × parallel modules, kWh. */
export function usableEnergyKWh(module: DesignModule, series: number, parallel: number): number {
	return round((module.usableWh * series * parallel) / 1000, 3);
}

function fits(v: StringVoltage, lo: number, hi: number): boolean {
	return v.min >= lo && v.max <= hi;
}

function preferredRange(inv: InverterWindow): [number, number] {
	return [inv.preferredMinV ?? inv.minV, inv.preferredMaxV ?? inv.maxV];
}

function fitsPreferredRange(v: StringVoltage, inv: InverterWindow): boolean {
	const [lo, hi] = preferredRange(inv);
	return fits(v, lo, hi);
}

/**
 * Checks one design. Currents are multiples of I_t = C_n / 1 h (IEC 61434) per string,
 * times the parallel strings; powers are at nominal string voltage.
 */
export function checkDesign(
	input: DesignCheckInput,
	options: DesignCheckOptions = {}
): DesignCheckResult {
	const { module, series, parallel, inverter } = input;
	const maxParallel = options.maxParallelStrings ?? DEFAULT_MAX_PARALLEL_STRINGS;

	const stringVoltage = stringVoltageOf(module, series);
	const energyKWh = usableEnergyKWh(module, series, parallel);
	const continuousA = currentForCRate(module.maxContinuousC, module.ratedAh) * parallel;
	const burstA = currentForCRate(module.burstC, module.ratedAh) * parallel;
	const fitsWindow = fits(stringVoltage, inverter.minV, inverter.maxV);
	// Without a preferred range the range is the window itself, so this equals fitsWindow.
	const fitsPreferred = fitsWindow && fitsPreferredRange(stringVoltage, inverter);

	const problems: string[] = [];
	if (stringVoltage.max > inverter.maxV) {
		problems.push(
			`String maximum ${v1(stringVoltage.max)} is above the inverter's ${v1(inverter.maxV)} DC maximum: ` +
				`remove a module per string or choose a lower-voltage variant.`
		);
	}
	if (stringVoltage.min < inverter.minV) {
		problems.push(
			`String minimum ${v1(stringVoltage.min)} is below the inverter's ${v1(inverter.minV)} DC minimum: ` +
				`add a module per string or choose a higher-voltage variant.`
		);
	}
	if (fitsWindow && !fitsPreferred) {
		const [lo, hi] = preferredRange(inverter);
		problems.push(
			`String range ${v1(stringVoltage.min)} to ${v1(stringVoltage.max)} fits the inverter's DC window ` +
				`but not its preferred ${v1(lo)} to ${v1(hi)}: expect derated power or efficiency near the ends.`
		);
	}
	const currentProblem = (kind: 'discharge' | 'charge', inverterA: number | undefined) => {
		if (inverterA === undefined || continuousA >= inverterA) return;
		problems.push(
			`Battery continuous current ${a1(continuousA)} (${parallel} × ${module.maxContinuousC}C × ${module.ratedAh} Ah) ` +
				`is below the inverter's ${a1(inverterA)} maximum ${kind} current: add a parallel string or ` +
				`limit the inverter's ${kind} current to ${a1(continuousA)}.`
		);
	};
	currentProblem('discharge', inverter.maxDischargeA);
	currentProblem('charge', inverter.maxChargeA);
	if (parallel > maxParallel) {
		problems.push(
			`${parallel} parallel strings exceed ${maxParallel}, the usual limit (common practice, not a standard): ` +
				`check the module maker's limit and the fault current, or choose a higher-energy arrangement.`
		);
	}
	const target = input.targetEnergyKWh;
	if (target !== undefined && energyKWh < target) {
		problems.push(
			`Usable energy ${energyKWh.toFixed(1)} kWh is below the ${target.toFixed(1)} kWh target: ` +
				`add a parallel string or see the suggestions.`
		);
	}

	return {
		stringVoltage,
		energyKWh,
		continuousCurrentA: round(continuousA, 1),
		burstCurrentA: round(burstA, 1),
		continuousPowerKW: round((stringVoltage.nominal * continuousA) / 1000, 3),
		burstPowerKW: round((stringVoltage.nominal * burstA) / 1000, 3),
		fitsWindow,
		fitsPreferred,
		problems,
		suggestions: suggestDesigns(input.variants ?? [], inverter, target ?? energyKWh, options)
	};
}

/**
 * Every variant × series (1 up to what the window's maximum allows) × parallel
 * (1..16 by default) that fits the inverter window and reaches the target usable energy,
 * ranked: preferred-range fit first, then smallest energy surplus, then fewest modules.
 * Without a target the checked design's own energy is used.
 */
export function suggestDesigns(
	variants: DesignVariant[],
	inverter: InverterWindow,
	targetEnergyKWh: number,
	options: DesignCheckOptions = {}
): DesignSuggestion[] {
	const maxP = options.maxSuggestionParallel ?? 16;
	const count = options.suggestionCount ?? 5;
	const found: (DesignSuggestion & { modules: number })[] = [];
	for (const { code, module } of variants) {
		for (let s = 1; s <= MAX_SERIES; s++) {
			const stringVoltage = stringVoltageOf(module, s);
			if (stringVoltage.max > inverter.maxV) break;
			if (!fits(stringVoltage, inverter.minV, inverter.maxV)) continue;
			for (let p = 1; p <= maxP; p++) {
				const energyKWh = usableEnergyKWh(module, s, p);
				if (energyKWh < targetEnergyKWh) continue;
				found.push({
					code,
					series: s,
					parallel: p,
					energyKWh,
					stringVoltage,
					fitsPreferred: fitsPreferredRange(stringVoltage, inverter),
					modules: s * p
				});
				// Larger p for the same variant and series only adds surplus and modules,
				// so it would never outrank this one; listing it would crowd out real choices.
				break;
			}
		}
	}
	// Array.prototype.sort is stable, so ties keep variant order, then series.
	found.sort(
		(a, b) =>
			Number(b.fitsPreferred) - Number(a.fitsPreferred) ||
			a.energyKWh - targetEnergyKWh - (b.energyKWh - targetEnergyKWh) ||
			a.modules - b.modules
	);
	return found.slice(0, count).map(({ modules: _modules, ...s }) => s);
}
