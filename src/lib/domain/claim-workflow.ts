/**
 * A warranty claim's workflow: its states, the moves an officer makes by hand, the decision
 * and what follows it, and the rules of the decision. Defined once: the database column, the
 * forms' schemas and the services read it. Pure: no database, no clock.
 *
 * Adding a state or a move: add the state to CLAIM_STATES with its words in
 * CLAIM_STATE_LABELS, and a line to CLAIM_TRANSITIONS saying how it is reached ('move' by
 * hand, 'decision', or 'automatic' when a service makes it on its own).
 */
import type { ClaimRecommendation as Recommendation } from './warranty';

export const CLAIM_STATES = [
	'filed',
	'in_review',
	'awaiting_evidence',
	'covered',
	'not_covered',
	'replacement_sent',
	'closed'
] as const;
export type ClaimState = (typeof CLAIM_STATES)[number];

export const CLAIM_STATE_LABELS: Record<ClaimState, string> = {
	filed: 'Filed',
	in_review: 'Under review',
	awaiting_evidence: 'Waiting for evidence',
	covered: 'Covered',
	not_covered: 'Not covered',
	replacement_sent: 'Replacement sent',
	closed: 'Closed'
};

/** How a transition happens: an officer's move, a decision, or a service on its own. */
export type ClaimTransitionKind = 'move' | 'decision' | 'automatic';

/**
 * Every allowed transition. Covered and not covered are reached only through a decision
 * (which stores the assessment and, where needed, the reason); replacement sent is also
 * reached on its own when the last replacement is scanned.
 */
export const CLAIM_TRANSITIONS: readonly {
	from: ClaimState;
	to: ClaimState;
	by: readonly ClaimTransitionKind[];
}[] = [
	{ from: 'filed', to: 'in_review', by: ['move'] },
	{ from: 'filed', to: 'awaiting_evidence', by: ['move'] },
	{ from: 'in_review', to: 'awaiting_evidence', by: ['move'] },
	{ from: 'awaiting_evidence', to: 'in_review', by: ['move', 'automatic'] },
	{ from: 'in_review', to: 'covered', by: ['decision'] },
	{ from: 'in_review', to: 'not_covered', by: ['decision'] },
	{ from: 'covered', to: 'replacement_sent', by: ['move', 'automatic'] },
	{ from: 'not_covered', to: 'closed', by: ['move'] },
	{ from: 'replacement_sent', to: 'closed', by: ['move'] }
];

/** The states a claim may go to from `from` by the given kind of transition. */
export function nextStates(from: ClaimState, by: ClaimTransitionKind): ClaimState[] {
	return CLAIM_TRANSITIONS.filter((t) => t.from === from && t.by.includes(by)).map((t) => t.to);
}

/** Moves a warranty officer may make by hand, per state (derived from CLAIM_TRANSITIONS). */
export const CLAIM_MOVES = Object.fromEntries(
	CLAIM_STATES.map((s) => [s, nextStates(s, 'move')])
) as Record<ClaimState, ClaimState[]>;

/** The outcomes of a decision. */
export const CLAIM_DECISIONS = ['covered', 'not_covered'] as const;
export type ClaimDecision = (typeof CLAIM_DECISIONS)[number];

/** States in which the claim still waits for the assembler's decision: the response-time target applies. */
export const AWAITING_DECISION: readonly ClaimState[] = ['filed', 'in_review', 'awaiting_evidence'];

/** Target response time: a decision within 10 calendar days of filing (calendar, not working days, to keep it plain). */
export const TARGET_RESPONSE_DAYS = 10;

/** The shortest reason accepted for a decision that departs from the recommendation. */
export const MIN_DECISION_REASON = 20;

/** A transition the workflow does not allow (services answer it as a conflict or bad input). */
export class ClaimTransitionError extends Error {
	constructor(
		message: string,
		/** 400 when the request asks for something that is never a move; 409 when the state forbids it now. */
		readonly status: 400 | 409 = 409
	) {
		super(message);
		this.name = 'ClaimTransitionError';
	}
}

const label = (s: ClaimState) => CLAIM_STATE_LABELS[s];

/** Throws unless `to` is a hand move from the claim's state, saying where it can go instead. */
export function assertTransition(reference: string, from: ClaimState, to: ClaimState): void {
	if (CLAIM_TRANSITIONS.some((t) => t.to === to && t.by.includes('decision')) && !isMove(from, to))
		throw new ClaimTransitionError(
			`${label(to)} is a decision: use the decision form, which keeps the assessment with it.`,
			400
		);
	if (isMove(from, to)) return;
	const allowed = CLAIM_MOVES[from];
	const next = allowed.length
		? `From ${label(from)} it can go to ${allowed.map(label).join(' or ')}.`
		: 'It is closed.';
	throw new ClaimTransitionError(
		`Claim ${reference} is ${label(from)} and cannot move to ${label(to)}. ${next}`
	);
}

function isMove(from: ClaimState, to: ClaimState): boolean {
	return CLAIM_MOVES[from].includes(to);
}

/** Whether a claim in this state can be decided now. */
export function mayDecide(state: ClaimState): boolean {
	return nextStates(state, 'decision').length > 0;
}

/** Throws unless the claim can be decided, with a hint where it is one move away. */
export function assertMayDecide(reference: string, state: ClaimState): void {
	if (mayDecide(state)) return;
	const oneMoveAway = CLAIM_STATES.filter(mayDecide).some((d) => CLAIM_MOVES[state].includes(d));
	const hint = oneMoveAway ? ` Move it to ${label(CLAIM_STATES.find(mayDecide)!)} first.` : '';
	throw new ClaimTransitionError(
		`Only a claim under review can be decided; ${reference} is ${label(state)}.${hint}`
	);
}

/** Evidence may still change the decision. */
export const mayAddEvidence = (state: ClaimState) => AWAITING_DECISION.includes(state);

/** Replacement modules are recorded for a covered claim. */
export const mayRecordReplacement = (state: ClaimState) => state === 'covered';

/** Adding evidence to a claim waiting for it puts it back under review on its own. */
export function stateAfterEvidence(state: ClaimState): ClaimState {
	return nextStates(state, 'automatic').find((s) => s === 'in_review') ?? state;
}

/** Once every claimed module has its replacement, the claim moves on by itself. */
export function stateAfterReplacement(state: ClaimState, allReplaced: boolean): ClaimState {
	if (!allReplaced) return state;
	return nextStates(state, 'automatic').find((s) => s === 'replacement_sent') ?? state;
}

/** Whether a decision follows the assessment's recommendation. */
export function decisionAgrees(rec: Recommendation, decision: ClaimDecision): boolean {
	return (
		(rec === 'cover' && decision === 'covered') || (rec === 'decline' && decision === 'not_covered')
	);
}

/**
 * A decision against the recommendation (or without the evidence the assessment asks for)
 * needs a written reason of at least MIN_DECISION_REASON characters. Returns the message
 * for the reason field, or null when the decision may stand as given.
 */
export function decisionReasonProblem(
	rec: Recommendation,
	decision: ClaimDecision,
	reason: string | null | undefined
): string | null {
	if (decisionAgrees(rec, decision)) return null;
	if ((reason?.trim().length ?? 0) >= MIN_DECISION_REASON) return null;
	return rec === 'need-evidence'
		? `The assessment asks for more evidence; say why you decide without it (at least ${MIN_DECISION_REASON} characters).`
		: `The assessment recommends ${rec === 'cover' ? 'cover' : 'declining'}; say why you decide otherwise (at least ${MIN_DECISION_REASON} characters).`;
}

/** The kinds of claim: on a module in service, or on one damaged or dead on delivery. */
export const CLAIM_KINDS = ['in-service', 'on-delivery'] as const;
export type ClaimKind = (typeof CLAIM_KINDS)[number];

export const CLAIM_KIND_LABELS: Record<ClaimKind, string> = {
	'in-service': 'In service (commissioned system)',
	'on-delivery': 'On delivery (shipped to you, not yet installed)'
};

/**
 * The faults a claim may name, which kind of claim can file each, and whether the
 * cycle-life assessment applies (it needs energy throughput or cycles). Our own list.
 */
export const CLAIM_FAULTS = {
	capacity_fade: {
		label: 'Capacity below what the warranty promises',
		kinds: ['in-service'],
		needsThroughput: true
	},
	no_output: {
		label: 'No output at all (no voltage at the terminals)',
		kinds: ['in-service', 'on-delivery'],
		needsThroughput: false
	},
	runs_hot: {
		label: 'Runs hot or warmer than the others',
		kinds: ['in-service'],
		needsThroughput: true
	},
	imbalance: {
		label: 'Cell voltages drift apart',
		kinds: ['in-service'],
		needsThroughput: true
	},
	damaged_in_transport: {
		label: 'Damaged in transport (case, terminals, packaging)',
		kinds: ['on-delivery'],
		needsThroughput: false
	},
	wrong_or_incomplete: {
		label: 'Wrong model or parts missing',
		kinds: ['on-delivery'],
		needsThroughput: false
	}
} as const satisfies Record<
	string,
	{ label: string; kinds: readonly ClaimKind[]; needsThroughput: boolean }
>;
export type ClaimFault = keyof typeof CLAIM_FAULTS;
export const CLAIM_FAULT_CODES = Object.keys(CLAIM_FAULTS) as ClaimFault[];

/** The faults a kind of claim can file, in the list's order. */
export function faultsFor(kind: ClaimKind): ClaimFault[] {
	return CLAIM_FAULT_CODES.filter((f) =>
		(CLAIM_FAULTS[f].kinds as readonly string[]).includes(kind)
	);
}

/** Whether a fault's claim needs energy throughput or cycles (the cycle-life assessment). */
export const needsThroughput = (fault: ClaimFault) => CLAIM_FAULTS[fault].needsThroughput;

/**
 * Which kind of claim fits a module in `state`, or null when none does. A commissioned module
 * is claimed in service; one shipped to the dealer and not installed, on delivery.
 */
export function claimKindFor(state: string): ClaimKind | null {
	if (state === 'commissioned') return 'in-service';
	if (state === 'shipped') return 'on-delivery';
	return null;
}

/** Days after shipment within which damage on delivery is expected to be reported (common practice). */
export const DELIVERY_REPORT_DAYS = 14;

/**
 * What a claim outside the cycle-life assessment needs (on delivery, or a fault such as no
 * output that throughput cannot explain): a recommendation with every reason. Photos are
 * the evidence of damage; a dead module is shown dead by its terminal voltage measured with
 * it isolated. The officer decides.
 */
export function assessFaultClaim(i: {
	kind: ClaimKind;
	fault: ClaimFault;
	/** Calendar day of the shipment (on delivery) and of the claim, YYYY-MM-DD. */
	shippedOn: string | null;
	claimedOn: string;
	withinTerm: boolean | null;
	photos: number;
	terminalVoltageV: number | null;
	minVoltageV: number;
}): { recommendation: Recommendation; reasons: string[]; needs: string[] } {
	const reasons: string[] = [];
	const needs: string[] = [];
	const label = CLAIM_FAULTS[i.fault].label;
	reasons.push(
		`${i.kind === 'on-delivery' ? 'A claim on delivery' : 'A claim in service'} for “${label}”: the cycle-life figures do not apply, so no throughput is needed.`
	);
	if (i.kind === 'on-delivery') {
		if (i.shippedOn) {
			const days = Math.round((Date.parse(i.claimedOn) - Date.parse(i.shippedOn)) / 86_400_000);
			if (days > DELIVERY_REPORT_DAYS) {
				reasons.push(
					`The claim came ${days} days after the shipment of ${i.shippedOn}, later than the ${DELIVERY_REPORT_DAYS} days in which damage on delivery is expected to be reported: weigh whether it happened in transport.`
				);
				needs.push('the delivery note and when the damage was found');
			} else
				reasons.push(
					`The claim came ${days} ${days === 1 ? 'day' : 'days'} after the shipment of ${i.shippedOn}.`
				);
		}
	} else if (i.withinTerm === false) {
		reasons.push('The warranty term has ended.');
	} else if (i.withinTerm === null) {
		needs.push('the commissioning record (no warranty start is on record)');
	}
	if (i.photos < 1) needs.push('photos of the module, its label and (on delivery) its packaging');
	else reasons.push(`${i.photos} ${i.photos === 1 ? 'photo is' : 'photos are'} attached.`);
	if (i.fault === 'no_output') {
		if (i.terminalVoltageV === null)
			needs.push('the terminal voltage, measured with the module isolated from the system');
		else if (i.terminalVoltageV < i.minVoltageV)
			reasons.push(
				`The terminal voltage of ${i.terminalVoltageV} V is below the module's ${i.minVoltageV} V minimum: the module is dead or deeply discharged.`
			);
		else
			reasons.push(
				`The terminal voltage of ${i.terminalVoltageV} V is within the module's range: check the system's wiring and protection before the module.`
			);
	}
	if (needs.length) reasons.push(`To decide, the assessment needs: ${needs.join('; ')}.`);
	const recommendation: Recommendation =
		i.kind === 'in-service' && i.withinTerm === false
			? 'decline'
			: needs.length
				? 'need-evidence'
				: i.fault === 'no_output' &&
					  i.terminalVoltageV !== null &&
					  i.terminalVoltageV >= i.minVoltageV
					? 'need-evidence'
					: 'cover';
	return { recommendation, reasons, needs };
}
