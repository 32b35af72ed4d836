/**
 * The claim workflow's moves and comments; the other use cases live beside it and are
 * re-exported here: decision (claim-decision), evidence (claim-evidence), replacement and
 * return inspection (claim-replacement).
 */
import { and, eq, isNull } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { claimModules, modules } from '$lib/server/db/schema';
import { type Actor } from '$lib/server/actor';
import { checkRule, ConflictError, InvalidInputError } from '$lib/server/errors';
import { assertTransition } from '$lib/domain/claim-workflow';
import { type MoveClaimInput } from '$lib/schemas/claim';
import { recordAudit } from './audit';
import { loadClaim, mailFiler, requireOfficer } from './claims';

import { label, logStep, setState } from './claim-steps';
import { claimComment, claimMoved } from '$lib/server/mail/templates/claims';

export { decideClaim } from './claim-decision';
export { addEvidence } from './claim-evidence';
export { recordReturnInspection, replaceModule } from './claim-replacement';

/**
 * Moves a claim along the workflow (see CLAIM_MOVES): warranty officers and administrators
 * only. Covered and not covered are decisions ({@link decideClaim}); replacement sent needs
 * a replacement scanned for every claimed module. The filer is told by e-mail.
 */
export async function moveClaim(
	db: Db,
	actor: Actor,
	claimId: number,
	input: MoveClaimInput,
	now = new Date()
) {
	requireOfficer(actor);
	const claim = await loadClaim(db, actor, claimId);
	const { to } = input;
	const comment = input.comment?.trim() || null;
	checkRule(() => assertTransition(claim.reference, claim.state, to));
	// Asking for evidence says what is needed: the dealer sees it first on the claim page.
	if (to === 'awaiting_evidence' && (comment?.length ?? 0) < 10)
		throw new InvalidInputError('Say which evidence you need (at least 10 characters).', [
			{ path: 'comment', message: 'Say which evidence you need (at least 10 characters).' }
		]);
	if (to === 'replacement_sent') {
		const missing = await db
			.select({ serial: modules.serial })
			.from(claimModules)
			.innerJoin(modules, eq(claimModules.moduleId, modules.id))
			.where(and(eq(claimModules.claimId, claim.id), isNull(claimModules.replacementModuleId)));
		if (missing.length)
			throw new ConflictError(
				`Scan a replacement for ${missing.map((m) => m.serial).join(', ')} first.`
			);
	}
	await writeTx(db, async (tx) => {
		await setState(
			tx,
			claim,
			to === 'awaiting_evidence'
				? { state: to, evidenceRequest: comment, evidenceRequestedAt: now }
				: { state: to },
			now
		);
		await logStep(tx, actor, claim, to, comment, now, `Claim ${claim.reference}: ${label(to)}`);
		await recordAudit(tx, actor, {
			action: 'claim.move',
			entity: 'claim',
			entityId: claim.reference,
			before: { state: claim.state },
			after: { state: to, comment },
			at: now
		});
	});
	await mailFiler(
		db,
		claim,
		claimMoved({ reference: claim.reference, to, by: actor.label, comment })
	);
	return { state: to };
}

/** A comment on the claim's timeline, by anyone who may see the claim. Staff comments are e-mailed to the filer. */
export async function commentOnClaim(
	db: Db,
	actor: Actor,
	claimId: number,
	comment: string,
	now = new Date()
) {
	const claim = await loadClaim(db, actor, claimId);
	const text = comment.trim();
	if (text.length < 2)
		throw new InvalidInputError('Write the comment.', [
			{ path: 'comment', message: 'Write the comment.' }
		]);
	await writeTx(db, async (tx) => {
		await logStep(tx, actor, claim, claim.state, text, now);
		await recordAudit(tx, actor, {
			action: 'claim.comment',
			entity: 'claim',
			entityId: claim.reference,
			after: { comment: text },
			at: now
		});
	});
	if (actor.userId !== claim.filedBy)
		await mailFiler(db, claim, claimComment({ reference: claim.reference, by: actor.label, text }));
}
