/** Use cases after a covered decision: the replacement module and the returned module's inspection. */
import { and, eq, isNull } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { claimModules, modules, systemSlots, systems } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { mayRecordReplacement, stateAfterReplacement } from '$lib/domain/claim-workflow';
import { endOf, mayReplace } from '$lib/domain/module-lifecycle';
import { type ReturnInspectionInput } from '$lib/schemas/claim';
import { STATE_LABELS } from '$lib/module-states';
import { recordAudit, recordEvent } from './audit';
import { findModule, serialFromScan } from './modules';
import { loadClaim, mailFiler, requireOfficer } from './claims';

import { label, logStep, setState } from './claim-steps';
import { replacementRecorded } from '$lib/server/mail/templates/claims';
import { actOnReturn, authoriseReturn } from './returns';

/**
 * Puts a replacement module into the failed module's place under a covered claim. The
 * replacement must be of the same model and in stock (or already shipped to the claim's
 * dealer); it takes the failed module's slot and system and inherits the remainder of the
 * original warranty (start, end and terms copied, not a fresh term). The failed module is
 * returned. When every claimed module has its replacement, the claim moves to replacement sent.
 */
export async function replaceModule(
	db: Db,
	actor: Actor,
	claimId: number,
	failedSerial: string,
	replacementScan: string,
	baseUrl?: string,
	now = new Date()
) {
	assertCan(
		actor,
		'replaceModule',
		'Replacements are recorded by warranty staff or a field technician.'
	);
	const claim = await loadClaim(db, actor, claimId);
	if (!mayRecordReplacement(claim.state))
		throw new ConflictError(
			`Replacements are recorded for a covered claim; ${claim.reference} is ${label(claim.state)}.`
		);
	const failed = await findModule(db, actor, failedSerial);
	const [link] = await db
		.select()
		.from(claimModules)
		.where(and(eq(claimModules.claimId, claim.id), eq(claimModules.moduleId, failed.id)));
	if (!link) throw new NotFoundError(`${failed.serial} is not on claim ${claim.reference}.`);
	if (link.replacementModuleId !== null)
		throw new ConflictError(`${failed.serial} already has its replacement.`);
	const repl = await findModule(
		db,
		actor,
		await serialFromScan(db, actor, replacementScan, baseUrl)
	);
	if (repl.id === failed.id)
		throw new InvalidInputError('That is the failed module itself: scan the replacement.');
	if (repl.modelId !== failed.modelId)
		throw new ConflictError(
			`${repl.serial} is of another model than ${failed.serial}: a replacement must be the same model.`
		);
	const usable =
		mayReplace(repl.state) &&
		(repl.state === 'in_stock' ||
			(repl.dealerOrgId !== null && repl.dealerOrgId === claim.dealerOrgId));
	if (!usable)
		throw new ConflictError(
			`${repl.serial} is ${STATE_LABELS[repl.state].toLowerCase()}: a replacement must be in stock, or shipped to this claim's dealer and not yet installed.`
		);
	const [slot] = await db.select().from(systemSlots).where(eq(systemSlots.moduleId, failed.id));
	const [sys] =
		claim.systemId === null
			? []
			: await db.select({ name: systems.name }).from(systems).where(eq(systems.id, claim.systemId));
	const where = slot
		? `string ${slot.stringNo}, position ${slot.position} of ${sys?.name ?? 'the system'}`
		: (sys?.name ?? 'the system');

	const { allReplaced, raNumber } = await writeTx(db, async (tx) => {
		if (slot)
			await tx
				.update(systemSlots)
				.set({ moduleId: repl.id })
				.where(
					and(
						eq(systemSlots.systemId, slot.systemId),
						eq(systemSlots.stringNo, slot.stringNo),
						eq(systemSlots.position, slot.position),
						eq(systemSlots.moduleId, failed.id)
					)
				);
		// On delivery the replacement goes to the dealer's stock (sent, not in service); in service
		// it takes the failed module's place in the commissioned system at once.
		const onDelivery = claim.kind === 'on-delivery';
		const moved = await tx
			.update(modules)
			.set({
				state: onDelivery ? endOf('sendAsReplacement') : endOf('fitAsReplacement'),
				systemId: onDelivery ? null : (failed.systemId ?? claim.systemId),
				dealerOrgId: failed.dealerOrgId ?? claim.dealerOrgId,
				shippedAt: repl.shippedAt ?? now,
				commissionedAt: onDelivery ? null : now,
				warrantyStartsOn: failed.warrantyStartsOn,
				warrantyEndsOn: failed.warrantyEndsOn,
				warrantyTerms: failed.warrantyTerms,
				updatedAt: now
			})
			.where(and(eq(modules.id, repl.id), eq(modules.state, repl.state)))
			.returning({ id: modules.id });
		if (!moved.length) throw new ConflictError(`${repl.serial} changed meanwhile; scan it again.`);
		await tx
			.update(modules)
			.set({ state: endOf('returnFailed'), systemId: null, updatedAt: now })
			.where(eq(modules.id, failed.id));
		await tx
			.update(claimModules)
			.set({ replacementModuleId: repl.id })
			.where(
				and(
					eq(claimModules.claimId, claim.id),
					eq(claimModules.moduleId, failed.id),
					isNull(claimModules.replacementModuleId)
				)
			);
		const warranty = failed.warrantyEndsOn
			? `; warranty to ${failed.warrantyEndsOn}, the remainder of the original`
			: '';
		await recordEvent(tx, actor, {
			moduleId: repl.id,
			kind: 'replaced',
			summary: `Replaces ${failed.serial} under claim ${claim.reference}, in ${where}${warranty}`,
			detail: { claim: claim.reference, replaces: failed.serial, slot: slot ?? null },
			at: now
		});
		await recordEvent(tx, actor, {
			moduleId: failed.id,
			kind: 'replaced',
			summary: `Replaced by ${repl.serial} under claim ${claim.reference}`,
			detail: { claim: claim.reference, replacement: repl.serial },
			at: now
		});
		await recordEvent(tx, actor, {
			moduleId: failed.id,
			kind: 'returned',
			summary: `Taken out of ${where} for return under claim ${claim.reference}`,
			detail: { claim: claim.reference },
			at: now
		});
		const raNumber = await authoriseReturn(tx, actor, claim, failed, now);
		const open = await tx
			.select({ id: claimModules.moduleId })
			.from(claimModules)
			.where(and(eq(claimModules.claimId, claim.id), isNull(claimModules.replacementModuleId)));
		await logStep(
			tx,
			actor,
			claim,
			claim.state,
			`${failed.serial} replaced by ${repl.serial} in ${where}.`,
			now
		);
		const next = stateAfterReplacement(claim.state, !open.length);
		if (next !== claim.state) {
			await setState(tx, claim, { state: next }, now);
			await logStep(tx, actor, claim, next, 'Every claimed module has its replacement.', now);
		}
		await recordAudit(tx, actor, {
			action: 'claim.replace',
			entity: 'claim',
			entityId: claim.reference,
			after: {
				failed: failed.serial,
				replacement: repl.serial,
				slot: slot ?? null,
				warrantyEndsOn: failed.warrantyEndsOn,
				raNumber
			},
			at: now
		});
		return { allReplaced: !open.length, raNumber };
	});
	await mailFiler(
		db,
		claim,
		replacementRecorded({
			reference: claim.reference,
			failedSerial: failed.serial,
			replacementSerial: repl.serial,
			where,
			warrantyEndsOn: failed.warrantyEndsOn,
			allReplaced,
			raNumber
		})
	);
	return {
		replacement: repl.serial,
		raNumber,
		state: allReplaced ? ('replacement_sent' as const) : claim.state
	};
}

/**
 * Records the inspection of a returned module of this claim (findings and cause, once, after
 * it was received): the claim page's form, through the returns desk's own step.
 */
export async function recordReturnInspection(
	db: Db,
	actor: Actor,
	claimId: number,
	serial: string,
	input: Pick<ReturnInspectionInput, 'findings' | 'cause'>,
	now = new Date()
) {
	requireOfficer(actor);
	const claim = await loadClaim(db, actor, claimId);
	const mod = await findModule(db, actor, serial);
	const [link] = await db
		.select({ id: claimModules.moduleId })
		.from(claimModules)
		.where(and(eq(claimModules.claimId, claim.id), eq(claimModules.moduleId, mod.id)));
	if (!link) throw new NotFoundError(`${mod.serial} is not on claim ${claim.reference}.`);
	await actOnReturn(db, actor, mod.serial, { action: 'inspect', ...input }, undefined, now);
	return { serial: mod.serial, cause: input.cause };
}
