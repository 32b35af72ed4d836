import { z } from 'zod';
import { recordId } from './fields';

export const allocationSchema = z.object({
	modelId: recordId('Choose a model.'),
	count: z.coerce
		.number({ message: 'Enter how many serials to reserve.' })
		.int('Enter a whole number.')
		.min(1, 'Reserve at least one serial.')
		.max(1000, 'Reserve at most 1,000 serials at a time.')
});

export const reprintSchema = z.object({
	reason: z
		.string()
		.trim()
		.min(3, 'Say why the label is printed again (e.g. “damaged in assembly”).')
		.max(200)
});

export const LABEL_FORMATS = ['a4', 'roll'] as const;
export type LabelFormat = (typeof LABEL_FORMATS)[number];
export const printedSchema = z.object({ format: z.enum(LABEL_FORMATS) });
