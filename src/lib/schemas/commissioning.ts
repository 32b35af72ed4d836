/**
 * The commissioning checklist as a technician enters it on a phone, shared by the page
 * (live preview), its form action and any API route. Safe for the browser.
 *
 * Form names: module open-circuit voltages `moduleOcvV.{string}.{position}` and string
 * voltages `stringVoltageV.{string}` (1-based); the rest by their key below. A blank
 * number means "not measured"; "12,5" reads as 12.5. Yes/no answers are 'yes' / 'no' /
 * blank. A JSON body may instead send `moduleOcvV` and `stringVoltageV` as arrays.
 */
import { z } from 'zod';
import { decimal, nullableText, readDecimal, yesNo } from './fields';
import type { CommissioningMeasurements } from '$lib/domain/commissioning';
import { signatureField } from './signature';

import { nestForm } from './commissioning-nest';

export { CODES_TAKE_PRECEDENCE, COMMISSIONING_CAUTIONS } from './commissioning-fields';
export { nestForm };

/** Form text to a number: the one decimal rule (`domain/decimal.ts`), re-exported for the page. */
export { readDecimal };

function measured(label: string, unit: string, min: number, max: number) {
	const range = `${label} must be between ${min} and ${max} ${unit}; leave it blank if not measured.`;
	return decimal(
		z
			.number({
				error: `${label} must be a number in ${unit}, e.g. 51,2; leave it blank if not measured.`
			})
			.min(min, { error: range })
			.max(max, { error: range })
			.nullable(),
		{ blank: 'null' }
	);
}

/** The measured items; `lenient` turns unreadable values into "not measured" for the live preview. */
function measurementFields(lenient: boolean) {
	const m = (label: string, unit: string, min: number, max: number) =>
		lenient ? measured(label, unit, min, max).catch(null) : measured(label, unit, min, max);
	const yn = (label: string) => (lenient ? yesNo(label).catch(null) : yesNo(label));
	return {
		// Wide bounds on purpose: a typo such as 5165 for 51.65 must reach the evaluation,
		// which calls it implausible against what the system can produce.
		moduleOcvV: z
			.array(z.array(m('Module open-circuit voltage', 'V', 0, 1_000_000)).max(64))
			.max(64)
			.default([]),
		stringVoltageV: z
			.array(m('String voltage', 'V', 0, 1_000_000))
			.max(64)
			.default([]),
		interStringDiffV: m('Difference between strings', 'V', 0, 1_000_000).default(null),
		insulationTestV: m('Insulation test voltage', 'V', 0, 5000).default(null),
		insulationMohm: m('Insulation resistance', 'MΩ', 0, 1_000_000).default(null),
		polarityChecked: yn('Polarity').default(null),
		torqueConfirmed: yn('Terminal torque').default(null),
		deviceRatingA: m('Protective device rating', 'A', 0, 100_000).default(null),
		deviceDcRatingV: m('Protective device DC voltage rating', 'V', 0, 10_000).default(null),
		deviceBreakingKA: m('Protective device breaking capacity', 'kA', 0, 1000).default(null),
		stringProtection: yn('Overcurrent device per string').default(null),
		ambientC: m('Ambient temperature', '°C', -60, 100).default(null),
		stopChargeProven: yn('Stop-charge signal').default(null)
	};
}

const measurementsObject = z.object(measurementFields(false));
export type MeasurementsInput = z.output<typeof measurementsObject>;

/** The measurements alone, strict: an unreadable number is an issue. */
export const measurementsSchema = z.preprocess(nestForm, measurementsObject);

/** The measurements for the live preview: an unreadable number counts as not measured. */
export const draftMeasurementsSchema = z.preprocess(nestForm, z.object(measurementFields(true)));

const optionalText = (max: number, label: string) =>
	nullableText(max, `Keep the ${label} under ${max} characters.`);

/** The whole submission: measurements, who signs, handover, and the cautions acknowledged. */
export const commissioningSchema = z.preprocess(
	nestForm,
	measurementsObject.extend({
		technicianName: z
			.string({ error: 'Enter the technician’s name.' })
			.trim()
			.min(2, { error: 'Enter the technician’s full name.' })
			.max(120, { error: 'Keep the name under 120 characters.' }),
		licenceNumber: z
			.string({ error: 'Enter the electrical licence number.' })
			.trim()
			.min(2, {
				error:
					'Enter the electrical licence number: a commissioning is signed by a licensed electrician.'
			})
			.max(60, { error: 'Keep the licence number under 60 characters.' }),
		handoverName: optionalText(120, 'handover name'),
		technicianSignature: signatureField('Technician’s signature'),
		ownerSignature: signatureField('Owner’s signature'),
		cautionsAcknowledged: z.preprocess(
			(v) => v === true || v === 'yes' || v === 'on' || v === 'true',
			z.literal(true, {
				error: 'Read the cautions and confirm “I have read the cautions” before submitting.'
			})
		)
	})
);
export type CommissioningInput = z.output<typeof commissioningSchema>;

/** The parsed checklist in the form the domain's evaluateCommissioning takes. */
export function toMeasurements(input: MeasurementsInput): CommissioningMeasurements {
	return {
		moduleOcvV: input.moduleOcvV,
		stringVoltageV: input.stringVoltageV,
		interStringDiffV: input.interStringDiffV,
		insulation: { testVoltageV: input.insulationTestV, measuredMohm: input.insulationMohm },
		polarityChecked: input.polarityChecked,
		torqueConfirmed: input.torqueConfirmed,
		protectiveDevice: {
			ratingA: input.deviceRatingA,
			dcVoltageRatingV: input.deviceDcRatingV,
			breakingCapacityKA: input.deviceBreakingKA
		},
		stringProtection: input.stringProtection,
		ambientC: input.ambientC,
		stopChargeProven: input.stopChargeProven
	};
}

/** The preview's measurements from the page's form values (never throws). */
export function draftMeasurements(values: Record<string, string>): CommissioningMeasurements {
	const parsed = draftMeasurementsSchema.safeParse(values);
	return parsed.success ? toMeasurements(parsed.data) : {};
}

/** A photo from the phone camera, with an optional caption. */
export const photoSchema = z.object({
	photo: z
		.instanceof(File, { error: 'Take or choose a photo first.' })
		.refine((f) => f.size > 0, { error: 'Take or choose a photo first.' }),
	caption: optionalText(200, 'caption')
});
