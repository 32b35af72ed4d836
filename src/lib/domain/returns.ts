/**
 * Returns of failed modules under a covered claim: the return authorisation number, the steps
 * (on its way back → received → inspected → reworked, kept for analysis or scrapped), and what
 * the module's condition on arrival means for the people handling it. Pure.
 */

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

/** A damaged module needs quarantine before anyone opens or tests it (common practice). */
export function needsQuarantine(condition: ArrivalCondition): boolean {
	return condition === 'case_damaged' || condition === 'swollen_hot_or_leaking';
}

/**
 * The return authorisation number of the n-th module (from 1) of a claim: RA-{year}-{claim
 * number}-{n}, e.g. claim CL-2026-0007's second module → RA-2026-0007-2. It is unique because
 * the claim reference is.
 */
export function raNumberFor(claimReference: string, n: number): string {
	if (!claimReference.startsWith('CL-'))
		throw new Error(`Not a claim reference: ${claimReference}`);
	if (!Number.isInteger(n) || n < 1) throw new Error('The module position starts at 1.');
	return `RA-${claimReference.slice(3)}-${n}`;
}

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
