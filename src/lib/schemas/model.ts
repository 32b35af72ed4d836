/**
 * Input of a module model, shared by the admin's new/edit forms and any API route.
 * Values arrive from FormData as strings: numbers are read from text ("2,35" too),
 * a blank number is "required", a blank GTIN means "none". Each issue names its field.
 */
import { z } from 'zod';
import { Gs1Error, toGtin14 } from '$lib/domain/gs1';
import { readDecimal } from './fields';
import { NEUTRAL } from '$lib/domain/format';

/** Form text to number by the one decimal rule: blank → undefined (so "required" can be said), "12,5" → 12.5. */
const fromText = (v: unknown) => {
	const n = readDecimal(v);
	return n === null
		? undefined
		: n === 'invalid'
			? typeof v === 'string'
				? v.slice(0, 50)
				: v
			: n;
};

const numberIn = (label: string, unit: string) =>
	z.number({
		error: (iss) =>
			iss.input === undefined
				? `Enter the ${label.toLowerCase()} (${unit}).`
				: `${label} must be a number in ${unit}.`
	});

const positive = (label: string, unit: string, max: number) =>
	z.preprocess(
		fromText,
		numberIn(label, unit)
			.positive({ error: `${label} must be above 0 ${unit}.` })
			.max(max, { error: `${label} must be at most ${max} ${unit}; check the unit.` })
	);

const between = (label: string, unit: string, min: number, max: number) =>
	z.preprocess(
		fromText,
		numberIn(label, unit)
			.min(min, { error: `${label} must be between ${min} and ${max} ${unit}.` })
			.max(max, { error: `${label} must be between ${min} and ${max} ${unit}.` })
	);

const whole = (label: string, unit: string, min: number, max: number) =>
	z.preprocess(
		fromText,
		numberIn(label, unit)
			.int({ error: `${label} must be a whole number.` })
			.min(min, { error: `${label} must be between ${min} and ${max} ${unit}.` })
			.max(max, { error: `${label} must be between ${min} and ${max} ${unit}.` })
	);

const CELL_V = [0.5, 5] as const;
const TEMP_C = [-60, 100] as const;

const voltage = (label: string) => between(label, 'V', ...CELL_V);
const temperature = (label: string) => between(label, '°C', ...TEMP_C);

/** Blank → null; otherwise any GTIN-8/12/13/14 with a valid check digit, stored as GTIN-14. */
const gtinField = z.preprocess(
	(v) =>
		typeof v === 'string' && v.length > 40
			? 'too long'
			: typeof v === 'string'
				? v.replace(/[\s-]/g, '') === ''
					? null
					: v.replace(/[\s-]/g, '')
				: (v ?? null),
	z
		.string({ error: 'GTIN must be digits.' })
		.transform((gtin, ctx) => {
			try {
				return toGtin14(gtin);
			} catch (e) {
				if (!(e instanceof Gs1Error)) throw e;
				// gs1.ts words the problem, e.g. "… its check digit should be 7; probably mistyped."
				ctx.issues.push({ code: 'custom', message: e.message, input: gtin });
				return z.NEVER;
			}
		})
		.nullable()
);

const fields = z.object({
	// Identity
	code: z
		.string({ error: 'Enter the model code.' })
		.trim()
		.max(20, {
			error: 'Code must be 2–20 capital letters, digits or hyphens, e.g. TC-HC-48.',
			abort: true
		})
		.toUpperCase()
		.regex(/^[A-Z0-9-]{2,20}$/, {
			error: 'Code must be 2–20 capital letters, digits or hyphens, e.g. TC-HC-48.'
		}),
	name: z
		.string({ error: 'Enter the model name.' })
		.trim()
		.min(2, { error: 'Enter the model name as customers see it, e.g. “TC-HC 48 V module”.' })
		.max(120, { error: 'Keep the name under 120 characters.' }),
	variant: z
		.string({ error: 'Enter the voltage variant.' })
		.trim()
		.max(4, { error: 'Variant must be 1–4 capital letters or digits, e.g. 48.', abort: true })
		.toUpperCase()
		.regex(/^[A-Z0-9]{1,4}$/, {
			error:
				'Variant must be 1–4 capital letters or digits, e.g. 48: it is printed in every serial.'
		}),
	gtin: gtinField,
	massKg: positive('Mass', 'kg', 2000),
	// Cells and ratings
	cellsSeries: whole('Cells in series', 'cells', 1, 400),
	cellMinV: voltage('Cell minimum voltage'),
	cellNominalV: voltage('Cell nominal voltage'),
	cellMaxV: voltage('Cell maximum voltage'),
	ratedAh: positive('Rated capacity', 'Ah', 100_000),
	usableWh: positive('Usable energy', 'Wh', 10_000_000),
	maxContinuousC: positive('Maximum continuous C-rate', 'C', 100),
	burstC: positive('Burst C-rate', 'C', 200),
	burstSeconds: whole('Burst duration', 's', 1, 3600),
	/** Data-sheet DC internal resistance of one module; blank = use the factory-test mean. */
	internalResistanceMohm: z.preprocess(
		(v) => (v === '' || v === undefined ? null : fromText(v)),
		numberIn('Module DC internal resistance', 'mΩ')
			.positive({ error: 'Module DC internal resistance must be above 0 mΩ.' })
			.max(10_000, {
				error: 'Module DC internal resistance must be at most 10000 mΩ; check the unit.'
			})
			.nullable()
	),
	// Temperature ranges
	chargeTempMinC: temperature('Lowest charging temperature'),
	chargeTempMaxC: temperature('Highest charging temperature'),
	dischargeTempMinC: temperature('Lowest discharging temperature'),
	dischargeTempMaxC: temperature('Highest discharging temperature'),
	// Factory test limits
	minCapacityAh: positive('Minimum measured capacity', 'Ah', 100_000),
	maxDcirMohm: positive('Maximum DC internal resistance', 'mΩ', 10_000),
	maxCellSpreadMv: positive('Maximum cell voltage spread', 'mV', 5_000),
	minInsulationMohm: positive('Minimum insulation resistance', 'MΩ', 100_000),
	// Warranty terms
	warrantyYears: whole('Warranty', 'years', 1, 40),
	ratedCycles: whole('Rated cycles', 'cycles', 1, 1_000_000),
	referenceTempC: temperature('Reference temperature'),
	endRetentionPct: between('End-of-warranty retention', '%', 1, 100),
	hotTempC: temperature('Hot test temperature'),
	hotRatedCycles: whole('Rated cycles when hot', 'cycles', 1, 1_000_000),
	/** What one replacement under warranty costs (module, freight, labour); blank = not yet entered. */
	replacementCost: z.preprocess(
		(v) => (typeof v === 'string' && v.trim() === '' ? null : v === undefined ? null : fromText(v)),
		z
			.number({ error: 'Replacement cost must be a number (or blank).' })
			.min(0, { error: 'Replacement cost must not be negative.' })
			.max(10_000_000, {
				error: `Replacement cost must be at most ${NEUTRAL.number(10_000_000)}; check the figure.`
			})
			.nullable()
	)
});

type Fields = z.output<typeof fields>;
const isNum = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);
const fmt = (x: number, digits = 0) => NEUTRAL.number(x, digits);

/**
 * Cross-field rules. They run even when another field failed (`when`), comparing only
 * the values that did parse, so the person sees every problem after one submission.
 */
function crossCheck(m: Partial<Fields>, ctx: z.RefinementCtx<Fields>) {
	const issue = (path: keyof Fields, message: string) =>
		ctx.addIssue({ code: 'custom', path: [path], message });
	const { cellMinV, cellNominalV, cellMaxV, cellsSeries, ratedAh, usableWh } = m;

	if (isNum(cellMinV) && isNum(cellNominalV) && !(cellMinV < cellNominalV))
		issue('cellMinV', `Cell minimum voltage must be below the nominal ${cellNominalV} V.`);
	if (isNum(cellNominalV) && isNum(cellMaxV) && !(cellNominalV < cellMaxV))
		issue('cellMaxV', `Cell maximum voltage must be above the nominal ${cellNominalV} V.`);

	if (isNum(usableWh) && isNum(cellsSeries) && isNum(cellMaxV) && isNum(ratedAh)) {
		const ceiling = cellsSeries * cellMaxV * ratedAh;
		if (usableWh > ceiling)
			issue(
				'usableWh',
				`${fmt(usableWh)} Wh is more than the module could hold even if every amp-hour came out at the maximum voltage ` +
					`(${cellsSeries} × ${cellMaxV} V × ${ratedAh} Ah = ${fmt(ceiling)} Wh). Check the usable energy, cells in series, voltages and rated capacity.`
			);
	}
	if (isNum(m.maxContinuousC) && isNum(m.burstC) && m.burstC < m.maxContinuousC)
		issue('burstC', `The burst C-rate cannot be below the continuous ${m.maxContinuousC} C.`);

	if (isNum(m.chargeTempMinC) && isNum(m.chargeTempMaxC) && !(m.chargeTempMinC < m.chargeTempMaxC))
		issue(
			'chargeTempMaxC',
			`The highest charging temperature must be above the lowest (${m.chargeTempMinC} °C).`
		);
	if (
		isNum(m.dischargeTempMinC) &&
		isNum(m.dischargeTempMaxC) &&
		!(m.dischargeTempMinC < m.dischargeTempMaxC)
	)
		issue(
			'dischargeTempMaxC',
			`The highest discharging temperature must be above the lowest (${m.dischargeTempMinC} °C).`
		);

	if (isNum(m.minCapacityAh) && isNum(ratedAh) && m.minCapacityAh > ratedAh)
		issue(
			'minCapacityAh',
			`The minimum capacity at factory test cannot exceed the rated ${ratedAh} Ah, or every module would fail.`
		);

	if (isNum(m.referenceTempC) && isNum(m.hotTempC) && !(m.hotTempC > m.referenceTempC))
		issue(
			'hotTempC',
			`The hot test temperature must be above the reference ${m.referenceTempC} °C.`
		);
	if (isNum(m.ratedCycles) && isNum(m.hotRatedCycles) && !(m.hotRatedCycles < m.ratedCycles))
		issue(
			'hotRatedCycles',
			`Rated cycles when hot must be fewer than the ${fmt(m.ratedCycles)} cycles at the reference temperature: heat shortens cell life.`
		);
}

export const modelInputSchema = fields.superRefine(crossCheck, { when: () => true });

export type ModelInput = z.output<typeof modelInputSchema>;
