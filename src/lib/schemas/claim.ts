/**
 * Inputs of the claim workflow (filing, moves, decision, evidence, replacement, return
 * inspection, the queue's query) and the words shown for claim states. Shared by the
 * pages, their actions and the API routes.
 */
import { z } from 'zod';
import { claimEvidenceFields, temperatureProfileSchema } from './warranty-assess';
import { isCalendarDate } from '$lib/domain/calendar';
import { blankToUndefined, optionalText, queryInt } from './fields';
import {
	AWAITING_DECISION,
	CLAIM_DECISIONS,
	CLAIM_MOVES,
	CLAIM_STATE_LABELS,
	CLAIM_STATES,
	MIN_DECISION_REASON,
	TARGET_RESPONSE_DAYS,
	CLAIM_FAULT_CODES,
	CLAIM_KINDS,
	type ClaimFault,
	type ClaimState
} from '$lib/domain/claim-workflow';
import { RETURN_CAUSES, type ReturnCause } from '$lib/claim-states';

export {
	AWAITING_DECISION,
	CLAIM_MOVES,
	CLAIM_STATE_LABELS,
	CLAIM_STATES as CLAIM_STATE_NAMES,
	MIN_DECISION_REASON,
	RETURN_CAUSES,
	TARGET_RESPONSE_DAYS,
	type ClaimState as ClaimStateName,
	type ReturnCause
};

/** Serials as scanned or typed: one per line (commas and spaces also separate). */
export const serialListSchema = z.preprocess(
	(v) => {
		const parts = (Array.isArray(v) ? v : [v]).flatMap((x) =>
			typeof x === 'string' ? x.split(/[\s,;]+/) : []
		);
		return [...new Set(parts.map((s) => s.trim()).filter(Boolean))];
	},
	z
		.array(z.string().max(300))
		.min(1, { error: 'Scan or type the serial of at least one module.' })
		.max(50, { error: 'One claim covers at most 50 modules; file separate claims for more.' })
);

export const throughputScopeSchema = z.enum(['system', 'module'], {
	error: 'Say whether the throughput is for the whole system or for one module.'
});

/** What an inverter log summary adds to the evidence (set by the log step of the form). */
export const logSummarySchema = z.object({
	fileName: z.string().max(200).optional(),
	rows: z.number().int().min(0),
	firstAt: z.string().max(40).nullable(),
	lastAt: z.string().max(40).nullable(),
	problems: z.array(z.string().max(500)).max(100),
	/** Hours at each cell temperature (0.1 °C steps): at most 1 601 from −40 to 120 °C. */
	temperatureProfile: temperatureProfileSchema.max(2000).optional()
});
export type LogSummaryEvidence = z.infer<typeof logSummarySchema>;

const jsonField = <T extends z.ZodType>(inner: T) =>
	z.preprocess((v) => {
		if (typeof v !== 'string') return v;
		if (v.trim() === '') return undefined;
		// A log summary is a few kilobytes; anything far larger is not one.
		if (v.length > 100_000) return v.slice(0, 0);
		try {
			return JSON.parse(v);
		} catch {
			return v;
		}
	}, inner.optional());

export const claimKindSchema = z.enum(CLAIM_KINDS, {
	error:
		'Say the kind of claim: "in-service" (a commissioned system) or "on-delivery" (shipped to you, not yet installed).'
});

export const claimFaultSchema = z.enum(CLAIM_FAULT_CODES as [ClaimFault, ...ClaimFault[]], {
	error: `Choose the fault from the list: ${CLAIM_FAULT_CODES.join(', ')}.`
});

/** The calendar day the fault was first seen. The service checks it is not after today. */
export const observedOnSchema = z
	.string({ error: 'Give the day the fault was first seen (YYYY-MM-DD).' })
	.max(10, { error: 'Write the day as YYYY-MM-DD.' })
	.refine(isCalendarDate, { error: 'The day the fault was seen must be a real date, YYYY-MM-DD.' });

/**
 * The filing form: kind, serials, fault from the list, the day it was seen, where the
 * throughput comes from; the evidence fields pass through to the service, which checks them
 * against what the fault needs. Photos are checked by the service too.
 */
export const fileClaimFormSchema = z.looseObject({
	kind: z.preprocess(blankToUndefined, claimKindSchema.default('in-service')),
	serials: serialListSchema,
	fault: claimFaultSchema,
	observedOn: observedOnSchema,
	throughputScope: z.preprocess(blankToUndefined, throughputScopeSchema.default('system')),
	log: jsonField(logSummarySchema)
});

/** `POST /api/claims`: any kind of claim; the evidence fields beside these are checked by the service. */
export const fileClaimApiSchema = z.looseObject({
	kind: claimKindSchema,
	serials: serialListSchema,
	fault: claimFaultSchema,
	observedOn: observedOnSchema,
	throughputScope: throughputScopeSchema.optional(),
	log: logSummarySchema.optional()
});
export type FileClaimForm = z.infer<typeof fileClaimFormSchema>;

export const moveClaimSchema = z.object({
	to: z.enum(CLAIM_STATES, { error: 'Choose the state to move the claim to.' }),
	comment: optionalText(2000, 'Keep the comment under 2000 characters.')
});
export type MoveClaimInput = z.infer<typeof moveClaimSchema>;

export const commentSchema = z.object({
	comment: z
		.string({ error: 'Write the comment.' })
		.trim()
		.min(2, { error: 'Write the comment.' })
		.max(2000, { error: 'Keep the comment under 2000 characters.' })
});

export const decideClaimSchema = z.object({
	decision: z.enum(CLAIM_DECISIONS, { error: 'Choose covered or not covered.' }),
	reason: optionalText(4000, 'Keep the reason under 4000 characters.')
});
export type DecideClaimInput = z.infer<typeof decideClaimSchema>;

/**
 * Evidence added later: every field optional (a blank field keeps what is on record);
 * the merged evidence is checked again with the filing rules.
 */
export const addEvidenceSchema = z.object({
	...claimEvidenceFields.shape,
	description: z.preprocess(blankToUndefined, claimEvidenceFields.shape.description.optional()),
	throughputScope: z.preprocess(blankToUndefined, throughputScopeSchema.optional()),
	log: jsonField(logSummarySchema),
	comment: optionalText(2000, 'Keep the note under 2000 characters.')
});
export type AddEvidenceInput = z.infer<typeof addEvidenceSchema>;

export const replacementSchema = z.object({
	failedSerial: z
		.string({ error: 'Choose the failed module.' })
		.trim()
		.min(1, { error: 'Choose the failed module.' })
		.max(300, { error: 'Choose the failed module from the list.' }),
	replacementScan: z
		.string({ error: 'Scan or type the replacement module.' })
		.trim()
		.min(1, { error: 'Scan or type the replacement module.' })
		.max(300)
});

export const returnInspectionSchema = z.object({
	serial: z
		.string({ error: 'Choose the returned module.' })
		.trim()
		.min(1, { error: 'Choose the returned module.' })
		.max(300, { error: 'Choose the returned module from the list.' }),
	cause: z.enum(Object.keys(RETURN_CAUSES) as [ReturnCause, ...ReturnCause[]], {
		error: 'Choose the cause found.'
	}),
	findings: z
		.string({ error: 'Write what the inspection found.' })
		.trim()
		.min(10, { error: 'Write what the inspection found (at least 10 characters).' })
		.max(4000, { error: 'Keep the findings under 4000 characters.' })
});
export type ReturnInspectionInput = z.infer<typeof returnInspectionSchema>;

export { MAX_LOG_BYTES } from '$lib/log-limits';

/** How an inverter log's columns are read: the person confirms what detectColumns suggests. */
export const logMappingSchema = z.object({
	timestampColumn: z
		.string({ error: 'Choose the timestamp column.' })
		.trim()
		.min(1, { error: 'Choose the timestamp column.' })
		.max(200, { error: 'A column name has at most 200 characters.' }),
	energyColumn: z
		.string({ error: 'Choose the discharge energy column.' })
		.trim()
		.min(1, { error: 'Choose the discharge energy column.' })
		.max(200, { error: 'A column name has at most 200 characters.' }),
	energyUnit: z.enum(['Wh', 'kWh'], { error: 'Choose Wh or kWh.' }),
	energyKind: z.enum(['cumulative', 'interval'], {
		error: 'Say whether the energy is a running total or per interval.'
	}),
	tempColumn: optionalText(200, 'A column name has at most 200 characters.')
});

export const CLAIM_SORTS = [
	'reference',
	'state',
	'dealer',
	'models',
	'serialCount',
	'filedAt'
] as const;
export type ClaimSort = (typeof CLAIM_SORTS)[number];

/** The claims queue's query, from the URL (`/claims?…` and `/api/claims?…`). */
export const claimQuerySchema = z.object({
	state: z.preprocess(
		blankToUndefined,
		z.enum(CLAIM_STATES, { error: 'Unknown claim state.' }).optional()
	),
	dealer: queryInt(1, Number.MAX_SAFE_INTEGER, 'Dealer'),
	model: optionalText(40, 'A model code has at most 40 characters.'),
	minAgeDays: queryInt(0, 100_000, 'Minimum age'),
	/** A serial, whole or its beginning (e.g. `PL48-26-0001`): claims naming a module it matches. */
	serial: z.preprocess(
		(v) => (typeof v === 'string' ? v.trim().toUpperCase() || undefined : v),
		z
			.string()
			.max(40, { error: 'A serial has at most 40 characters: type it or its beginning.' })
			.regex(/^[A-Z0-9-]+$/, {
				error: 'Search by serial with letters, digits and hyphens only (e.g. PL48-26-0001).'
			})
			.optional()
	),
	page: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).default(1)),
	pageSize: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(100).default(25)),
	sort: z.preprocess(blankToUndefined, z.enum(CLAIM_SORTS).default('filedAt')),
	dir: z.preprocess(blankToUndefined, z.enum(['asc', 'desc']).default('asc'))
});
export type ClaimQuery = z.infer<typeof claimQuerySchema>;
