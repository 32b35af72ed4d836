/**
 * Returns of failed modules under a covered claim: the return authorisation number, the steps
 * (on its way back → received → inspected → reworked, kept for analysis or scrapped), and what
 * the module's condition on arrival means for the people handling it, and each step in words.
 * Pure.
 */
import { RETURN_CAUSES } from '$lib/claim-states';
import type { ReturnActionInput } from '$lib/schemas/returns';

export const RETURN_OUTCOMES = ['reworked', 'kept_for_analysis', 'scrapped'] as const;
export type ReturnOutcome = (typeof RETURN_OUTCOMES)[number];

export const RETURN_OUTCOME_LABELS: Record<ReturnOutcome, string> = {
	reworked: 'Reworked',
	kept_for_analysis: 'Kept for analysis',
	scrapped: 'Scrapped'
};

/** The condition of a returned module when it arrives: our own short list. */
export const ARRIVAL_CONDITIONS = {
	intact: 'Intact, packaging sound',
	packaging_damaged: 'Packaging damaged, module looks intact',
	case_damaged: 'Case or terminals damaged',
	swollen_hot_or_leaking: 'Swollen, warm, smelling or leaking'
} as const;
export type ArrivalCondition = keyof typeof ARRIVAL_CONDITIONS;
export const ARRIVAL_CONDITION_KEYS = Object.keys(ARRIVAL_CONDITIONS) as [
	ArrivalCondition,
	...ArrivalCondition[]
];

/** A damaged module needs quarantine before anyone opens or tests it (common practice). */
export function needsQuarantine(condition: ArrivalCondition): boolean {
	return condition === 'case_damaged' || condition === 'swollen_hot_or_leaking';
}

/**
 * Return authorisation numbers are a yearly sequence of their own, RA-{year}-{NNNN}, counted
 * on the assembler's calendar year like claim and shipment references (e.g. RA-2026-0001).
 */
export const RA_SEQUENCE = { code: 'RA', width: 4 } as const;

/** Where a return stands, from what is recorded. */
export type ReturnStep = 'on_its_way' | 'received' | 'inspected' | 'closed';

export function returnStep(r: {
	receivedAt: Date | null;
	inspectedAt: Date | null;
	returnOutcome: ReturnOutcome | null;
}): ReturnStep {
	if (r.returnOutcome) return 'closed';
	if (r.inspectedAt) return 'inspected';
	if (r.receivedAt) return 'received';
	return 'on_its_way';
}

export const RETURN_STEP_LABELS: Record<ReturnStep, string> = {
	on_its_way: 'On its way back',
	received: 'Received',
	inspected: 'Inspected',
	closed: 'Done'
};

/** What the workshop does with a return, in order: scan it in, inspect it, then decide. */
export const RETURN_ACTIONS = ['receive', 'inspect', 'rework', 'keep', 'scrap'] as const;
export type ReturnAction = (typeof RETURN_ACTIONS)[number];

/** The module move each action makes (see module-lifecycle.ts) and the outcome it records. */
export const RETURN_ACTION_MOVES = {
	receive: { move: 'receiveReturn', outcome: null },
	inspect: { move: 'inspectReturn', outcome: null },
	rework: { move: 'rework', outcome: 'reworked' },
	keep: { move: 'keepForAnalysis', outcome: 'kept_for_analysis' },
	scrap: { move: 'scrap', outcome: 'scrapped' }
} as const satisfies Record<ReturnAction, { move: string; outcome: ReturnOutcome | null }>;

/**
 * The actions open at a step. A module kept for analysis may still be reworked or scrapped
 * once the analysis is done; a reworked or scrapped return is finished.
 */
export function returnActionsAt(
	step: ReturnStep,
	outcome: ReturnOutcome | null
): readonly ReturnAction[] {
	if (step === 'on_its_way') return ['receive'];
	if (step === 'received') return ['inspect'];
	if (step === 'inspected') return ['rework', 'keep', 'scrap'];
	return outcome === 'kept_for_analysis' ? ['rework', 'scrap'] : [];
}

/**
 * Why an action cannot be taken now, in words a person can act on; null when it can.
 * `raNumber` names the return in the message.
 */
export function refusalOf(
	action: ReturnAction,
	r: { raNumber: string; step: ReturnStep; outcome: ReturnOutcome | null }
): string | null {
	if (returnActionsAt(r.step, r.outcome).includes(action)) return null;
	if (action === 'receive')
		return `Return ${r.raNumber} was already received; it is not on its way back.`;
	if (action === 'inspect')
		return r.step === 'on_its_way'
			? `Return ${r.raNumber} has not arrived yet: scan it in first.`
			: `Return ${r.raNumber} was already inspected; an inspection is recorded once.`;
	if (r.step === 'on_its_way' || r.step === 'received')
		return `Return ${r.raNumber} must be ${r.step === 'on_its_way' ? 'received and ' : ''}inspected before it is reworked, kept or scrapped.`;
	return `Return ${r.raNumber} is finished (${RETURN_OUTCOME_LABELS[r.outcome ?? 'scrapped'].toLowerCase()}).`;
}

/** The step in words for the timelines and the e-mail, and its facts for the audit. */
export function describeReturnStep(
	input: ReturnActionInput,
	raNumber: string,
	claimReference: string
) {
	const under = `return ${raNumber} (claim ${claimReference})`;
	switch (input.action) {
		case 'receive': {
			const words = ARRIVAL_CONDITIONS[input.condition];
			const quarantine = needsQuarantine(input.condition) ? ' Held in quarantine.' : '';
			return {
				summary: `Received back under ${under}: ${words.toLowerCase()}.${quarantine}${input.note ? ` ${input.note}` : ''}`,
				detail: { raNumber, condition: input.condition, note: input.note ?? null }
			};
		}
		case 'inspect':
			return {
				summary: `Inspected under ${under}: ${RETURN_CAUSES[input.cause]}. ${input.findings}`,
				detail: { raNumber, cause: input.cause, findings: input.findings }
			};
		case 'rework':
			return {
				summary: `Reworked after ${under}: ${input.work}`,
				detail: { raNumber, outcome: 'reworked', work: input.work }
			};
		case 'keep':
			return {
				summary: `Kept for analysis after ${under}.${input.note ? ` ${input.note}` : ''}`,
				detail: { raNumber, outcome: 'kept_for_analysis', note: input.note ?? null }
			};
		case 'scrap':
			return {
				summary: `Scrapped after ${under}: ${input.reason}`,
				detail: { raNumber, outcome: 'scrapped', reason: input.reason }
			};
	}
}
