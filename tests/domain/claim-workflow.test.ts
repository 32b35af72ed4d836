/**
 * The claim workflow against the product description's account of a claim (filed → under
 * review ⇄ waiting for evidence → decided covered or not covered → replacement sent → closed;
 * a decision against the computed recommendation needs a written reason). The expected moves
 * are written out here by hand from that account, not read from the table under test.
 */
import { assessFaultClaim, claimKindFor } from '../../src/lib/domain/claim-workflow';
import { describe, expect, it } from 'vitest';
import {
	assertMayDecide,
	assertTransition,
	CLAIM_MOVES,
	CLAIM_STATE_LABELS,
	CLAIM_STATES,
	ClaimTransitionError,
	decisionAgrees,
	decisionReasonProblem,
	mayAddEvidence,
	mayDecide,
	mayRecordReplacement,
	MIN_DECISION_REASON,
	nextStates,
	stateAfterEvidence,
	stateAfterReplacement
} from '../../src/lib/domain/claim-workflow';
import { CLAIM_STATES as DB_STATES } from '../../src/lib/server/db/schema';
import { CLAIM_STATE_NAMES } from '../../src/lib/schemas/claim';

describe('claim workflow', () => {
	it('is the one enumeration of the database column and the forms', () => {
		expect(DB_STATES).toBe(CLAIM_STATES);
		expect(CLAIM_STATE_NAMES).toBe(CLAIM_STATES);
		expect(CLAIM_STATES.filter((s) => !CLAIM_STATE_LABELS[s])).toEqual([]);
	});

	it('lets an officer make exactly these moves by hand', () => {
		expect(CLAIM_MOVES).toEqual({
			// "Ask for evidence" is one step from a filed claim (issue 13, item 5).
			filed: ['in_review', 'awaiting_evidence'],
			in_review: ['awaiting_evidence'],
			awaiting_evidence: ['in_review'],
			covered: ['replacement_sent'],
			not_covered: ['closed'],
			replacement_sent: ['closed'],
			closed: []
		});
	});

	it('reaches covered and not covered only by a decision, from under review', () => {
		expect(nextStates('in_review', 'decision').sort()).toEqual(['covered', 'not_covered']);
		expect(CLAIM_STATES.filter(mayDecide)).toEqual(['in_review']);
		expect(() => assertTransition('C-1', 'in_review', 'covered')).toThrow(
			/Covered is a decision: use the decision form/
		);
		try {
			assertTransition('C-1', 'in_review', 'not_covered');
		} catch (e) {
			expect(e).toBeInstanceOf(ClaimTransitionError);
			expect((e as ClaimTransitionError).status).toBe(400);
		}
	});

	it('refuses a move the state does not allow, naming where it can go', () => {
		expect(() => assertTransition('C-7', 'filed', 'closed')).toThrow(
			'Claim C-7 is Filed and cannot move to Closed. From Filed it can go to Under review or Waiting for evidence.'
		);
		expect(() => assertTransition('C-7', 'closed', 'in_review')).toThrow(/It is closed\./);
		expect(() => assertTransition('C-7', 'filed', 'in_review')).not.toThrow();
	});

	it('says to move a claim under review before deciding it, where one move away', () => {
		expect(() => assertMayDecide('C-2', 'filed')).toThrow(
			'Only a claim under review can be decided; C-2 is Filed. Move it to Under review first.'
		);
		expect(() => assertMayDecide('C-2', 'awaiting_evidence')).toThrow(/Move it to Under review/);
		expect(() => assertMayDecide('C-2', 'covered')).toThrow(/C-2 is Covered\.$/);
		expect(() => assertMayDecide('C-2', 'in_review')).not.toThrow();
	});

	it('takes evidence until the decision; evidence puts a waiting claim back under review', () => {
		expect(CLAIM_STATES.filter(mayAddEvidence)).toEqual([
			'filed',
			'in_review',
			'awaiting_evidence'
		]);
		expect(stateAfterEvidence('awaiting_evidence')).toBe('in_review');
		expect(stateAfterEvidence('filed')).toBe('filed');
		expect(stateAfterEvidence('in_review')).toBe('in_review');
	});

	it('records replacements on a covered claim and moves on when all are in', () => {
		expect(CLAIM_STATES.filter(mayRecordReplacement)).toEqual(['covered']);
		expect(stateAfterReplacement('covered', false)).toBe('covered');
		expect(stateAfterReplacement('covered', true)).toBe('replacement_sent');
	});

	it('asks for a reason exactly when the decision departs from the recommendation', () => {
		expect(decisionAgrees('cover', 'covered')).toBe(true);
		expect(decisionAgrees('decline', 'not_covered')).toBe(true);
		expect(decisionAgrees('need-evidence', 'covered')).toBe(false);
		expect(decisionReasonProblem('cover', 'covered', null)).toBeNull();
		expect(decisionReasonProblem('cover', 'not_covered', '')).toMatch(
			/recommends cover; say why you decide otherwise \(at least 20 characters\)/
		);
		expect(decisionReasonProblem('decline', 'covered', null)).toMatch(/recommends declining/);
		expect(decisionReasonProblem('need-evidence', 'covered', 'short')).toMatch(
			/asks for more evidence/
		);
		// The boundary: 19 characters (after trimming) are too few, 20 are enough.
		const r19 = 'x'.repeat(MIN_DECISION_REASON - 1);
		const r20 = 'x'.repeat(MIN_DECISION_REASON);
		expect(MIN_DECISION_REASON).toBe(20);
		expect(decisionReasonProblem('cover', 'not_covered', `  ${r19}  `)).not.toBeNull();
		expect(decisionReasonProblem('cover', 'not_covered', r20)).toBeNull();
	});
});

describe('claims outside the cycle-life figures (common practice: damage on delivery is reported within days)', () => {
	const base = {
		kind: 'on-delivery' as const,
		fault: 'damaged_in_transport' as const,
		shippedOn: '2026-11-10',
		claimedOn: '2026-11-24',
		withinTerm: null,
		photos: 2,
		terminalVoltageV: null,
		minVoltageV: 39.6
	};
	it('covers a photographed claim on delivery made within 14 days, at exactly 14 too', () => {
		expect(assessFaultClaim(base).recommendation).toBe('cover');
		expect(assessFaultClaim({ ...base, claimedOn: '2026-11-25' }).recommendation).toBe(
			'need-evidence'
		);
	});
	it('asks for photos, and for the terminal voltage of a module with no output', () => {
		expect(assessFaultClaim({ ...base, photos: 0 }).needs).toEqual([
			'photos of the module, its label and (on delivery) its packaging'
		]);
		const dead = { ...base, fault: 'no_output' as const };
		expect(assessFaultClaim(dead).needs).toEqual([
			'the terminal voltage, measured with the module isolated from the system'
		]);
		// 12 V at the terminals of a module whose minimum is 39.6 V: dead → cover.
		expect(assessFaultClaim({ ...dead, terminalVoltageV: 12 }).recommendation).toBe('cover');
		// 51 V is within range: look at the wiring first.
		expect(assessFaultClaim({ ...dead, terminalVoltageV: 51 }).recommendation).toBe(
			'need-evidence'
		);
	});
	it('declines a claim in service past its term', () => {
		expect(
			assessFaultClaim({
				...base,
				kind: 'in-service',
				fault: 'no_output',
				withinTerm: false,
				terminalVoltageV: 0
			}).recommendation
		).toBe('decline');
	});
	it('tells which kind of claim fits a module', () => {
		expect(claimKindFor('commissioned')).toBe('in-service');
		expect(claimKindFor('shipped')).toBe('on-delivery');
		expect(claimKindFor('installed')).toBeNull();
	});
});
