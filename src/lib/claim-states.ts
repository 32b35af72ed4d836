// Claim states and their words for pages; no zod here, so a page importing them does not carry the schema library.
// The states and moves themselves live in the domain's claim workflow (one enumeration).
export {
	AWAITING_DECISION,
	CLAIM_MOVES,
	CLAIM_STATE_LABELS,
	CLAIM_STATES as CLAIM_STATE_NAMES,
	MIN_DECISION_REASON,
	TARGET_RESPONSE_DAYS,
	type ClaimState as ClaimStateName
} from '$lib/domain/claim-workflow';

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
