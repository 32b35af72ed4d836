/** Use case: deciding a claim under review (covered / not covered) against the assessment. */
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { claimModules, modules } from '$lib/server/db/schema';
import { type Actor } from '$lib/server/actor';
import { checkRule, InvalidInputError } from '$lib/server/errors';
import { assertMayDecide, decisionReasonProblem } from '$lib/domain/claim-workflow';
import { endOf, statesFrom } from '$lib/domain/module-lifecycle';
import { type DecideClaimInput } from '$lib/schemas/claim';
import { recordAudit } from './audit';
import { loadClaim, mailFiler, requireOfficer } from './claims';
import { assessmentFor } from './claim-assessment';

import { label, logStep, setState } from './claim-steps';
import { claimDecided } from '$lib/server/mail/templates/claims';

/**
 * Decides a claim under review. The assessment is computed now and stored with the
 * decision. Deciding otherwise than the recommendation (or without the evidence the
 * assessment asks for) needs a written reason of at least MIN_DECISION_REASON characters.
 * Not covered puts the modules back in service; covered leaves them under claim until replaced.
 */
export async function decideClaim(
	db: Db,
	actor: Actor,
	claimId: number,
	input: DecideClaimInput,
	now = new Date()
) {
	requireOfficer(actor);
	const claim = await loadClaim(db, actor, claimId);
	checkRule(() => assertMayDecide(claim.reference, claim.state));
	const assessment = await assessmentFor(db, claim);
	const rec = assessment.recommendation;
	const reason = input.reason?.trim() || null;
	const message = decisionReasonProblem(rec, input.decision, reason);
	if (message) throw new InvalidInputError(message, [{ path: 'reason', message }]);
	const to = input.decision;
	const recWords = { cover: 'cover', decline: 'decline', 'need-evidence': 'more evidence' }[rec];
	await writeTx(db, async (tx) => {
		await setState(
			tx,
			claim,
			{
				state: to,
				decision: to,
				decisionReason: reason,
				decidedBy: actor.userId,
				decidedAt: now,
				assessment: JSON.stringify(assessment)
			},
			now
		);
		await logStep(
			tx,
			actor,
			claim,
			to,
			`Decided ${label(to).toLowerCase()}; the assessment recommended ${recWords}.${reason ? ` ${reason}` : ''}`,
			now,
			`Claim ${claim.reference}: ${label(to)}`
		);
		if (to === 'not_covered') {
			// Back in service, or (a claim on delivery) back in the dealer's stock.
			const back = claim.kind === 'on-delivery' ? 'declineDeliveryClaim' : 'declineClaim';
			const ids = (
				await tx
					.select({ id: claimModules.moduleId })
					.from(claimModules)
					.where(eq(claimModules.claimId, claim.id))
			).map((r) => r.id);
			await tx
				.update(modules)
				.set({ state: endOf(back), updatedAt: now })
				.where(and(inArray(modules.id, ids), inArray(modules.state, statesFrom(back))));
		}
		await recordAudit(tx, actor, {
			action: 'claim.decide',
			entity: 'claim',
			entityId: claim.reference,
			before: { state: claim.state },
			after: { decision: to, recommendation: rec, reason },
			at: now
		});
	});
	await mailFiler(
		db,
		claim,
		claimDecided({
			reference: claim.reference,
			to,
			reason,
			assessmentReasons: assessment.reasons
		})
	);
	return { state: to, recommendation: rec };
}
