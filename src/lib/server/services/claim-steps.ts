/** Shared steps of the claim workflow's use cases: timeline entries and guarded state changes. */
import { and, eq } from 'drizzle-orm';
import type { Tx } from '$lib/server/db';
import { claimEvents, claimModules, claims } from '$lib/server/db/schema';
import { type Actor } from '$lib/server/actor';
import { ConflictError } from '$lib/server/errors';
import { CLAIM_STATE_LABELS, type ClaimStateName } from '$lib/schemas/claim';
import { recordEvent } from './audit';
import { type ClaimRow } from './claims';

export const label = (s: ClaimStateName) => CLAIM_STATE_LABELS[s];

/** Records a claim's step on its own timeline, and on the timeline of each claimed module still on it. */
export async function logStep(
	tx: Tx,
	actor: Actor,
	claim: ClaimRow,
	to: ClaimStateName,
	comment: string | null,
	now: Date,
	moduleSummary?: string
) {
	await tx.insert(claimEvents).values({
		claimId: claim.id,
		at: now,
		actorUserId: actor.userId,
		actorLabel: actor.label,
		fromState: claim.state,
		toState: to,
		comment
	});
	if (moduleSummary) {
		const ids = (
			await tx
				.select({ id: claimModules.moduleId })
				.from(claimModules)
				.where(eq(claimModules.claimId, claim.id))
		).map((r) => r.id);
		for (const moduleId of ids)
			await recordEvent(tx, actor, {
				moduleId,
				kind: 'claim_updated',
				summary: moduleSummary,
				detail: { claim: claim.reference, to },
				at: now
			});
	}
}

/** Changes the state only if nobody else changed it meanwhile. */
export async function setState(
	tx: Tx,
	claim: ClaimRow,
	set: Partial<typeof claims.$inferInsert>,
	now: Date
) {
	const done = await tx
		.update(claims)
		.set({ ...set, updatedAt: now })
		.where(and(eq(claims.id, claim.id), eq(claims.state, claim.state)))
		.returning({ id: claims.id });
	if (!done.length)
		throw new ConflictError(
			`Claim ${claim.reference} changed while you were working on it; reload the page.`
		);
}
