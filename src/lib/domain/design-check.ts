/**
 * System design check: modules in series × strings in parallel against an inverter's
 * DC window, and suggestions of variant × series × parallel for a target energy.
 * Pure: no SvelteKit, database or clock. Inputs are validated by
 * `designCheckInputSchema` (src/lib/schemas/design-check.ts) before they reach here.
 */
import { currentForCRate, type ModelSpec } from './model';
import { bankShortCircuitA, judgeProtection, type ProtectiveDevice } from './electrical';
import { NEUTRAL } from './format';
import { toInverterWindow, type InverterWindow } from './inverter-window';

export { toInverterWindow, type InverterWindow };

/** The model figures the check reads. */
type DesignFigures =
	| 'cellsSeries'
	| 'cellMinV'
	| 'cellNominalV'
	| 'cellMaxV'
	| 'ratedAh'
	| 'usableWh'
	| 'maxContinuousC'
	| 'burstC';

/** The module data the check needs; a subset of ModelSpec, plus its DC internal resistance. */
export type DesignModule = Pick<ModelSpec, DesignFigures> & {
	/** DC internal resistance of one module, mΩ (data sheet or factory-test mean); needed for the fault current. */
	internalResistanceMOhm?: number;
};

/** A stored module model's row as far as the design check reads it (the DB column names). */
export type DesignModelRow = Pick<ModelSpec, DesignFigures> & {
	internalResistanceMohm?: number | null;
};

/**
 * The figures the design check needs, from a stored model row: the one mapping used by the
 * server (services/systems) and by the phone's offline pages (offline/views) alike.
 */
export function designModuleOf(m: DesignModelRow): DesignModule {
	return {
		cellsSeries: m.cellsSeries,
		cellMinV: m.cellMinV,
		cellNominalV: m.cellNominalV,
		cellMaxV: m.cellMaxV,
		ratedAh: m.ratedAh,
		usableWh: m.usableWh,
		maxContinuousC: m.maxContinuousC,
		burstC: m.burstC,
		...(m.internalResistanceMohm ? { internalResistanceMOhm: m.internalResistanceMohm } : {})
	};
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
	/** The protective device planned for the battery circuit, judged when given. */
	protection?: ProtectiveDevice;
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
	/** Whether the nominal string voltage lies inside the preferred window (or the window). */
	nominalInPreferred: boolean;
	/** Why this suggestion ranks where it does, in words with its numbers. */
	reason: string;
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
	/**
	 * The bank's prospective short-circuit current, A: strings in parallel × module maximum
	 * voltage ÷ module internal resistance (cable resistance neglected); null when the module's
	 * internal resistance is not known.
	 */
	shortCircuitCurrentA: number | null;
	/** The planned protective device judged by current, DC voltage and breaking capacity; null when none was given. */
	protection: { fits: boolean; problems: string[] } | null;
	/** With parallel strings: why each string needs its own overcurrent device; null for one string. */
	stringProtectionNote: string | null;
	/** How the suggestions are ranked, in one sentence. */
	suggestionRanking: string;
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
	const shortCircuitA =
		module.internalResistanceMOhm !== undefined && module.internalResistanceMOhm > 0
			? round(
					bankShortCircuitA({
						parallel,
						series,
						moduleMaxV: module.cellsSeries * module.cellMaxV,
						moduleInternalResistanceMOhm: module.internalResistanceMOhm
					}),
					0
				)
			: null;
	const protection = input.protection
		? judgeProtection(input.protection, {
				continuousA,
				stringMaxV: stringVoltage.max,
				shortCircuitA
			})
		: null;
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
		suggestions: suggestDesigns(input.variants ?? [], inverter, target ?? energyKWh, options),
		shortCircuitCurrentA: shortCircuitA,
		protection: protection ? { fits: protection.fits, problems: protection.problems } : null,
		stringProtectionNote: parallel > 1 ? stringProtectionNote(parallel, shortCircuitA) : null,
		suggestionRanking: SUGGESTION_RANKING
	};
}

/** Why paralleled strings each need an own overcurrent device (common practice). */
export function stringProtectionNote(parallel: number, shortCircuitA: number | null): string {
	const fed =
		shortCircuitA === null
			? 'the other strings'
			: `the other ${parallel - 1} string${parallel === 2 ? '' : 's'} (up to ${NEUTRAL.number(((parallel - 1) / parallel) * shortCircuitA)} A of the ${NEUTRAL.number(shortCircuitA)} A)`;
	return (
		`Give each of the ${parallel} strings its own overcurrent device: a fault inside one string is fed by ${fed}, ` +
		`and only a device in that string separates it from them (common practice).`
	);
}

export const SUGGESTION_RANKING =
	'Ranked by: nominal string voltage inside the preferred window first, then the smallest energy surplus over the target, ' +
	'then the nominal voltage nearest the middle of the preferred window, then the fewest modules.';

/** Where the nominal voltage sits in a range: 0 in the middle, 1 at either end, above 1 outside. */
export function offCentre(nominal: number, lo: number, hi: number): number {
	const mid = (lo + hi) / 2;
	const half = (hi - lo) / 2;
	return half > 0 ? Math.abs(nominal - mid) / half : nominal === mid ? 0 : Infinity;
}

/**
 * Every variant × series (1 up to what the window's maximum allows) × parallel
 * (1..16 by default) that fits the inverter window and reaches the target usable energy,
 * ranked as an installer would pick (SUGGESTION_RANKING): the nominal voltage inside the
 * preferred window, then the smallest energy surplus, then the nominal voltage nearest the
 * middle of the preferred window, then the fewest modules. The whole min-to-max range of a
 * titanate string spans about 1.5 : 1, so it rarely fits a narrow preferred window; the
 * nominal voltage is where it runs most of the time. Without a target the checked design's
 * own energy is used.
 */
export function suggestDesigns(
	variants: DesignVariant[],
	inverter: InverterWindow,
	targetEnergyKWh: number,
	options: DesignCheckOptions = {}
): DesignSuggestion[] {
	const maxP = options.maxSuggestionParallel ?? 16;
	const count = options.suggestionCount ?? 5;
	const found: (DesignSuggestion & { modules: number; centre: number })[] = [];
	const [plo, phi] = preferredRange(inverter);
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
					nominalInPreferred: stringVoltage.nominal >= plo && stringVoltage.nominal <= phi,
					reason: '',
					modules: s * p,
					centre: offCentre(stringVoltage.nominal, plo, phi)
				});
				// Larger p for the same variant and series only adds surplus and modules,
				// so it would never outrank this one; listing it would crowd out real choices.
				break;
			}
		}
	}
	// Surplus compared to the watt-hour, so float noise cannot reorder equal energies.
	const surplusWh = (x: { energyKWh: number }) =>
		Math.round((x.energyKWh - targetEnergyKWh) * 1000);
	// Array.prototype.sort is stable, so full ties keep variant order, then series.
	found.sort(
		(a, b) =>
			Number(b.nominalInPreferred) - Number(a.nominalInPreferred) ||
			surplusWh(a) - surplusWh(b) ||
			a.centre - b.centre ||
			a.modules - b.modules
	);
	return found.slice(0, count).map(({ modules, centre, ...s }) => ({
		...s,
		reason: suggestionReason(s, modules, centre, [plo, phi], targetEnergyKWh)
	}));
}

function suggestionReason(
	s: DesignSuggestion,
	modules: number,
	centre: number,
	[lo, hi]: [number, number],
	targetKWh: number
): string {
	const where = s.nominalInPreferred
		? `nominal ${v1(s.stringVoltage.nominal)} inside the preferred ${v1(lo)} to ${v1(hi)}, ${Math.round(centre * 100)} % of the way from its middle to its edge`
		: `nominal ${v1(s.stringVoltage.nominal)} outside the preferred ${v1(lo)} to ${v1(hi)}`;
	const surplus = s.energyKWh - targetKWh;
	const energy =
		Math.abs(surplus) < 0.0005
			? `${s.energyKWh.toFixed(1)} kWh, exactly the target`
			: `${s.energyKWh.toFixed(1)} kWh, ${surplus.toFixed(2)} kWh above the ${targetKWh.toFixed(1)} kWh target`;
	return `${where}; ${energy}; ${modules} module${modules === 1 ? '' : 's'}.`;
}

/** The inverter fields of a system form or a stored system. */
export type InverterFields = Parameters<typeof toInverterWindow>[0];

/**
 * The design check of one system, entered or stored: its model's figures, its strings and its
 * inverter's window. The server (saving and showing a system) and the phone's offline pages
 * judge a system through this one call.
 */
export function checkSystemDesign(
	model: DesignModelRow,
	system: { series: number; parallel: number } & InverterFields
): DesignCheckResult {
	return checkDesign({
		module: designModuleOf(model),
		series: system.series,
		parallel: system.parallel,
		inverter: toInverterWindow(system)
	});
}
