/**
 * Input of the system design check, shared by the form, its action and the API route.
 * Each issue names the field and the problem, so a 400 answer is actionable as it is.
 */
import { z } from 'zod';
import type { DesignCheckInput, DesignModule, InverterWindow } from '$lib/domain/design-check';
import { NEUTRAL } from '$lib/domain/format';

const positive = (label: string) =>
	z
		.number({ error: `${label} must be a number` })
		.positive({ error: `${label} must be above zero` });

const count = (label: string) =>
	z
		.int({ error: `${label} must be a whole number` })
		.min(1, { error: `${label} must be at least 1` })
		.max(64, { error: `${label} must be at most 64` });

export const designModuleSchema = z
	.object({
		cellsSeries: count('Cells in series'),
		cellMinV: positive('Cell minimum voltage'),
		cellNominalV: positive('Cell nominal voltage'),
		cellMaxV: positive('Cell maximum voltage'),
		ratedAh: positive('Rated capacity'),
		usableWh: positive('Usable energy'),
		maxContinuousC: positive('Maximum continuous C-rate'),
		burstC: positive('Burst C-rate'),
		internalResistanceMOhm: positive('Module internal resistance (mΩ)')
			.max(10_000, {
				error: `Module internal resistance (mΩ) must be at most ${NEUTRAL.number(10_000)} mΩ; check the unit`
			})
			.optional()
	})
	.refine((m) => m.cellMinV < m.cellNominalV, {
		error: 'Cell minimum voltage must be below the nominal voltage',
		path: ['cellMinV']
	})
	.refine((m) => m.cellNominalV < m.cellMaxV, {
		error: 'Cell nominal voltage must be below the maximum voltage',
		path: ['cellMaxV']
	}) satisfies z.ZodType<DesignModule>;

export const inverterWindowSchema = z
	.object({
		minV: positive('Inverter DC minimum'),
		maxV: positive('Inverter DC maximum'),
		preferredMinV: positive('Preferred minimum').optional(),
		preferredMaxV: positive('Preferred maximum').optional(),
		maxChargeA: positive('Inverter maximum charge current').optional(),
		maxDischargeA: positive('Inverter maximum discharge current').optional()
	})
	.refine((w) => w.minV < w.maxV, {
		error: 'Inverter DC minimum must be below its maximum',
		path: ['minV']
	})
	.refine(
		(w) => w.preferredMinV === undefined || (w.preferredMinV >= w.minV && w.preferredMinV < w.maxV),
		{
			error: 'Preferred minimum must lie within the inverter DC window',
			path: ['preferredMinV']
		}
	)
	.refine(
		(w) => w.preferredMaxV === undefined || (w.preferredMaxV <= w.maxV && w.preferredMaxV > w.minV),
		{
			error: 'Preferred maximum must lie within the inverter DC window',
			path: ['preferredMaxV']
		}
	)
	.refine(
		(w) =>
			w.preferredMinV === undefined ||
			w.preferredMaxV === undefined ||
			w.preferredMinV < w.preferredMaxV,
		{ error: 'Preferred minimum must be below the preferred maximum', path: ['preferredMinV'] }
	) satisfies z.ZodType<InverterWindow>;

/** A protective device as its data sheet gives it: current rating, DC voltage rating, breaking capacity. */
export const protectionSchema = z.object({
	ratedCurrentA: positive('protection.ratedCurrentA (A)'),
	ratedVoltageDcV: positive('protection.ratedVoltageDcV (V DC)'),
	breakingCapacityKA: positive('protection.breakingCapacityKA (kA)').max(1000, {
		error: 'protection.breakingCapacityKA is in kA and must be at most 1000; check the unit'
	})
});

export const designCheckInputSchema = z.object({
	module: designModuleSchema,
	series: count('Modules in series'),
	parallel: count('Strings in parallel'),
	inverter: inverterWindowSchema,
	targetEnergyKWh: positive('Target energy').optional(),
	variants: z
		.array(
			z.object({
				code: z.string().trim().min(1, { error: 'Variant code is required' }),
				module: designModuleSchema
			})
		)
		.max(20, { error: 'At most 20 variants can be compared' })
		.optional(),
	protection: protectionSchema.optional()
}) satisfies z.ZodType<DesignCheckInput>;

export type DesignCheckInputParsed = z.infer<typeof designCheckInputSchema>;
