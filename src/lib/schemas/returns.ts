/** `POST /api/returns/{serial}` and the returns desk's forms: one body per step of a return. */
import { z } from 'zod';
import { ARRIVAL_CONDITION_KEYS } from '$lib/domain/returns';
import { RETURN_CAUSES, type ReturnCause } from '$lib/claim-states';

const text = (what: string, min: number, max: number) =>
	z
		.string({ error: `${what}.` })
		.trim()
		.min(min, { error: `${what} (at least ${min} characters).` })
		.max(max, { error: `Keep it under ${max} characters.` });

const note = z
	.string()
	.trim()
	.max(2000, { error: 'Keep the note under 2000 characters.' })
	.optional();

export const returnActionSchema = z.discriminatedUnion(
	'action',
	[
		z.object({
			action: z.literal('receive'),
			condition: z.enum(ARRIVAL_CONDITION_KEYS, {
				error: 'Choose the condition the module arrived in.'
			}),
			note
		}),
		z.object({
			action: z.literal('inspect'),
			cause: z.enum(Object.keys(RETURN_CAUSES) as [ReturnCause, ...ReturnCause[]], {
				error: 'Choose the cause found.'
			}),
			findings: text('Write what the inspection found', 10, 4000)
		}),
		z.object({
			action: z.literal('rework'),
			work: text('Say what was done to the module', 10, 2000)
		}),
		z.object({ action: z.literal('keep'), note }),
		z.object({ action: z.literal('scrap'), reason: text('Give the reason for scrapping', 10, 500) })
	],
	{ error: 'Say what to do: receive, inspect, rework, keep or scrap.' }
);
export type ReturnActionInput = z.infer<typeof returnActionSchema>;
