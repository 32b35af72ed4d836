/** Inputs of the workshop's actions on a failed or wrongly registered module (pages and API alike). */
import { z } from 'zod';
import { buildSchema } from './build';

const text = (what: string, min: number, max: number) =>
	z
		.string({ error: `${what}.` })
		.trim()
		.min(min, { error: `${what} (at least ${min} characters).` })
		.max(max, { error: `Keep it under ${max} characters.` });

/** `POST /api/modules/{serial}/rework` and the record's rework form. */
export const reworkSchema = z.object({
	work: text('Say what was done to the module', 10, 2000)
});
export type ReworkInput = z.infer<typeof reworkSchema>;

/** `POST /api/modules/{serial}/scrap` and the record's scrap form. */
export const scrapSchema = z.object({
	reason: text('Give the reason for scrapping', 10, 500)
});
export type ScrapInput = z.infer<typeof scrapSchema>;

/** Correcting a wrongly registered build: the build's own fields and why. */
export const correctBuildSchema = buildSchema.extend({
	reason: text('Say why the build record is corrected', 10, 500)
});
export type CorrectBuildInput = z.infer<typeof correctBuildSchema>;
