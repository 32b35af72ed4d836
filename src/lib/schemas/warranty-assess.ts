/**
 * Inputs of warranty assessment: the JSON request for `assessClaim` and the evidence a
 * dealer files with a claim (a form, so numbers arrive as strings and blanks mean "not given").
 */
import { z } from 'zod';
import { isCalendarDate } from '$lib/domain/calendar';
import { calendarDate, decimal, optionalText, requiredText } from './fields';
import { NEUTRAL } from '$lib/domain/format';

const TEMP_MIN_C = -40;
const TEMP_MAX_C = 120;

export { isCalendarDate };

const day = (label: string) => calendarDate(label);

const temperature = (label: string) =>
	z
		.number({ error: `${label} must be a number in °C.` })
		.min(TEMP_MIN_C, { error: `${label} must be between ${TEMP_MIN_C} and ${TEMP_MAX_C} °C.` })
		.max(TEMP_MAX_C, { error: `${label} must be between ${TEMP_MIN_C} and ${TEMP_MAX_C} °C.` });

const positive = (label: string, unit: string) =>
	z
		.number({ error: `${label} must be a number in ${unit}.` })
		.positive({ error: `${label} must be above 0 ${unit}.` });

const nonNegative = (label: string, unit: string) =>
	z
		.number({ error: `${label} must be a number in ${unit}.` })
		.min(0, { error: `${label} must not be negative.` });

export const warrantyTermsSchema = z
	.object({
		years: z.number().int({ error: 'Warranty years must be a whole number.' }).min(1).max(50),
		ratedCycles: positive('Rated cycles', 'cycles'),
		endRetentionPct: z
			.number({ error: 'End retention must be a number in %.' })
			.min(1, { error: 'End retention must be between 1 and 100 %.' })
			.max(100, { error: 'End retention must be between 1 and 100 %.' }),
		referenceTempC: temperature('Reference temperature'),
		hotTempC: temperature('Hot temperature'),
		hotRatedCycles: positive('Hot rated cycles', 'cycles')
	})
	.refine((t) => t.hotTempC > t.referenceTempC, {
		error: 'The hot temperature must be above the reference temperature.',
		path: ['hotTempC']
	})
	.refine((t) => t.hotRatedCycles < t.ratedCycles, {
		error: 'The hot rated cycles must be fewer than the rated cycles at the reference temperature.',
		path: ['hotRatedCycles']
	});

/** Most spans a temperature profile may have (an hourly log of eleven years fits). */
export const MAX_PROFILE_SPANS = 100_000;

/** Time at each cell temperature, e.g. from an inverter log: `[{ tempC, hours }]`. */
export const temperatureProfileSchema = z
	.array(
		z.object({
			tempC: temperature('A profile temperature'),
			hours: z
				.number({ error: 'Each profile span needs its hours as a number.' })
				.min(0, { error: 'Profile hours must not be negative.' })
				.max(1_000_000, {
					error: `A profile span cannot last more than ${NEUTRAL.number(1_000_000)} hours.`
				})
		}),
		{ error: 'temperatureProfile must be a list of { tempC, hours }.' }
	)
	.max(MAX_PROFILE_SPANS, {
		error: `A temperature profile may have at most ${NEUTRAL.number(MAX_PROFILE_SPANS)} spans; group the readings by temperature first.`
	})
	.refine((p) => p.length === 0 || p.some((s) => s.hours > 0), {
		error: 'The temperature profile covers no time: give the hours at each temperature.'
	});

/** Request body for a warranty assessment; matches `ClaimInput` of domain/warranty. */
export const assessRequestSchema = z
	.object({
		terms: warrantyTermsSchema,
		commissionedOn: day('Commissioning date').nullable(),
		claimedOn: day('Claim date'),
		ratedCapacityAh: positive('Rated capacity', 'Ah'),
		measuredCapacityAh: nonNegative('Measured capacity', 'Ah').nullish(),
		usableWh: positive('Usable energy', 'Wh'),
		throughputWh: nonNegative('Throughput', 'Wh').nullish(),
		cycles: nonNegative('Cycle count', 'cycles').nullish(),
		measuredAtC: temperature('Capacity test temperature').nullish(),
		avgCellTempC: temperature('Average cell temperature').nullish(),
		temperatureProfile: temperatureProfileSchema.nullish(),
		capacityUncertaintyPct: z
			.number({ error: 'Capacity test uncertainty must be a number in % of the reading.' })
			.min(0, { error: 'Capacity test uncertainty must be between 0 and 20 %.' })
			.max(20, { error: 'Capacity test uncertainty must be between 0 and 20 %.' })
			.nullish(),
		stopChargeProven: z.boolean().nullish(),
		eventsOutsideLimits: z
			.union([z.array(z.string().trim().min(1).max(500)).max(200), z.number().int().min(0)], {
				error: 'Events outside limits must be a list of descriptions or a whole number.'
			})
			.nullish()
	})
	.refine(
		(r) =>
			!r.commissionedOn ||
			!isCalendarDate(r.commissionedOn) ||
			!isCalendarDate(r.claimedOn) ||
			r.claimedOn >= r.commissionedOn,
		{
			error: 'The claim date must not be before the commissioning date.',
			path: ['claimedOn']
		}
	);

export type AssessRequest = z.infer<typeof assessRequestSchema>;

/** Form field to number (the one decimal rule of fields.ts): blank means not given. */
const formNumber = <T extends z.ZodType>(inner: T) => decimal(inner.optional());

export const claimEvidenceFields = z.object({
	measuredCapacityAh: formNumber(nonNegative('Measured capacity', 'Ah')),
	measuredAtC: formNumber(temperature('Test temperature')),
	throughputWh: formNumber(nonNegative('Throughput', 'Wh')),
	cycleCount: formNumber(
		nonNegative('Cycle count', 'cycles').int({ error: 'Cycle count must be a whole number.' })
	),
	avgCellTempC: formNumber(temperature('Average cell temperature')),
	maxCellTempC: formNumber(temperature('Maximum cell temperature')),
	/** Measured at the terminals with the module isolated (a module with no output). */
	terminalVoltageV: formNumber(
		nonNegative('Terminal voltage', 'V').max(1500, {
			error: 'Terminal voltage must be at most 1500 V.'
		})
	),
	eventsOutsideLimits: optionalText(2000, 'Keep the events under 2000 characters.'),
	description: requiredText(2000, {
		required: 'Describe the fault.',
		min: 10,
		tooShort: 'Describe the fault in at least 10 characters.',
		tooLong: 'Keep the fault description under 2000 characters.'
	})
});

const temperaturesInOrder = (e: { avgCellTempC?: number; maxCellTempC?: number }) =>
	e.avgCellTempC === undefined || e.maxCellTempC === undefined || e.maxCellTempC >= e.avgCellTempC;
const TEMPERATURE_ORDER = {
	error: 'The maximum cell temperature cannot be below the average.',
	path: ['maxCellTempC']
};

/** Evidence a dealer files with a claim. Throughput or a cycle count is required. */
export const claimEvidenceSchema = claimEvidenceFields
	.refine((e) => e.throughputWh !== undefined || e.cycleCount !== undefined, {
		error: 'Give the energy throughput (Wh) or the cycle count.',
		path: ['throughputWh']
	})
	.refine(temperaturesInOrder, TEMPERATURE_ORDER);

/**
 * Evidence of a claim the cycle-life figures do not decide (on delivery, or a module with
 * no output at all): throughput is not needed.
 */
export const faultEvidenceSchema = claimEvidenceFields.refine(
	temperaturesInOrder,
	TEMPERATURE_ORDER
);

export type ClaimEvidence = z.infer<typeof claimEvidenceSchema>;
