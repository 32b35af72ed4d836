// Claim states and their words for pages; no zod here, so a page importing them does not carry the schema library.
export const CLAIM_STATE_NAMES = [
	'filed',
	'in_review',
	'awaiting_evidence',
	'covered',
	'not_covered',
	'replacement_sent',
	'closed'
] as const;
export type ClaimStateName = (typeof CLAIM_STATE_NAMES)[number];

export const CLAIM_STATE_LABELS: Record<ClaimStateName, string> = {
	filed: 'Filed',
	in_review: 'Under review',
	awaiting_evidence: 'Waiting for evidence',
	covered: 'Covered',
	not_covered: 'Not covered',
	replacement_sent: 'Replacement sent',
	closed: 'Closed'
};

/**
 * Moves a warranty officer may make by hand. Covered and not covered are reached only
 * through a decision (which stores the assessment and, where needed, the reason), and
 * replacement sent also follows on its own when the last replacement is scanned.
 */
export const CLAIM_MOVES: Record<ClaimStateName, ClaimStateName[]> = {
	filed: ['in_review'],
	in_review: ['awaiting_evidence'],
	awaiting_evidence: ['in_review'],
	covered: ['replacement_sent'],
	not_covered: ['closed'],
	replacement_sent: ['closed'],
	closed: []
};

/** States in which the claim still waits for the assembler's decision: the response-time target applies. */
export const AWAITING_DECISION: readonly ClaimStateName[] = [
	'filed',
	'in_review',
	'awaiting_evidence'
];

/** Target response time: a decision within 10 calendar days of filing (calendar, not working days, to keep it plain). */
export const TARGET_RESPONSE_DAYS = 10;

/** What the return inspection found to be the cause. Our own short list. */
export const RETURN_CAUSES = {
	cell_fade_within_spec: 'Cell fade within the warranted curve',
	cell_fade_premature: 'Premature cell fade',
	over_temperature_operation: 'Operated above the temperature limits',
	over_charge: 'Over-charged (stop-charge not obeyed)',
	mechanical_damage: 'Mechanical damage',
	connection_fault: 'Connection or terminal fault',
	no_fault_found: 'No fault found'
} as const;
export type ReturnCause = keyof typeof RETURN_CAUSES;
