import { and, eq, inArray, isNull } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	claimEvents,
	claimModules,
	claims,
	moduleModels,
	modules,
	systemSlots,
	systems
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import {
	ConflictError,
	ForbiddenError,
	InvalidInputError,
	NotFoundError
} from '$lib/server/errors';
import { claimEvidenceSchema } from '$lib/schemas/warranty-assess';
import {
	AWAITING_DECISION,
	CLAIM_MOVES,
	CLAIM_STATE_LABELS,
	MIN_DECISION_REASON,
	RETURN_CAUSES,
	type AddEvidenceInput,
	type ClaimStateName,
	type DecideClaimInput,
	type MoveClaimInput,
	type ReturnInspectionInput
} from '$lib/schemas/claim';
import { STATE_LABELS } from '$lib/module-states';
import { toIssues } from '$lib/server/validation';
import { recordAudit, recordEvent } from './audit';
import { findModule, serialFromScan } from './modules';
import { loadClaim, mailFiler, requireOfficer, type ClaimRow } from './claims';
import {
	assessmentFor,
	fmtNumber,
	implausibleEvidence,
	modulesInSystem,
	parseEvidence,
	type StoredEvidence
} from './claim-assessment';

const label = (s: ClaimStateName) => CLAIM_STATE_LABELS[s];

/** Records a claim's step on its own timeline, and on the timeline of each claimed module still on it. */
async function logStep(
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
async function setState(
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
	if (to === 'covered' || to === 'not_covered')
		throw new InvalidInputError(
			`${label(to)} is a decision: use the decision form, which keeps the assessment with it.`
		);
	const allowed = CLAIM_MOVES[claim.state];
	if (!allowed.includes(to)) {
		const next = allowed.length
			? `From ${label(claim.state)} it can go to ${allowed.map(label).join(' or ')}.`
			: 'It is closed.';
		throw new ConflictError(
			`Claim ${claim.reference} is ${label(claim.state)} and cannot move to ${label(to)}. ${next}`
		);
	}
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
		await setState(tx, claim, { state: to }, now);
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
	const asks =
		to === 'awaiting_evidence'
			? '\n\nPlease add the evidence asked for to the claim; it goes back under review as soon as you do.'
			: '';
	await mailFiler(
		db,
		claim,
		`Claim ${claim.reference}: ${label(to)}`,
		`Claim ${claim.reference} is now: ${label(to)}.${comment ? `\n\n${actor.label} writes: ${comment}` : ''}${asks}`
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
		await mailFiler(
			db,
			claim,
			`Claim ${claim.reference}: a comment`,
			`${actor.label} commented on claim ${claim.reference}:\n\n${text}`
		);
}

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
	if (claim.state !== 'in_review') {
		const hint =
			claim.state === 'filed' || claim.state === 'awaiting_evidence'
				? ' Move it to Under review first.'
				: '';
		throw new ConflictError(
			`Only a claim under review can be decided; ${claim.reference} is ${label(claim.state)}.${hint}`
		);
	}
	const assessment = await assessmentFor(db, claim);
	const rec = assessment.recommendation;
	const agrees =
		(rec === 'cover' && input.decision === 'covered') ||
		(rec === 'decline' && input.decision === 'not_covered');
	const reason = input.reason?.trim() || null;
	if (!agrees && (reason?.length ?? 0) < MIN_DECISION_REASON) {
		const message =
			rec === 'need-evidence'
				? `The assessment asks for more evidence; say why you decide without it (at least ${MIN_DECISION_REASON} characters).`
				: `The assessment recommends ${rec === 'cover' ? 'cover' : 'declining'}; say why you decide otherwise (at least ${MIN_DECISION_REASON} characters).`;
		throw new InvalidInputError(message, [{ path: 'reason', message }]);
	}
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
			const ids = (
				await tx
					.select({ id: claimModules.moduleId })
					.from(claimModules)
					.where(eq(claimModules.claimId, claim.id))
			).map((r) => r.id);
			await tx
				.update(modules)
				.set({ state: 'commissioned', updatedAt: now })
				.where(and(inArray(modules.id, ids), eq(modules.state, 'claim_open')));
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
	const why = reason ? `\n\nThe warranty officer's reason: ${reason}` : '';
	const next =
		to === 'covered'
			? 'A replacement will follow; we will tell you when it is on its way.'
			: 'The modules are back in service on the register.';
	await mailFiler(
		db,
		claim,
		`Claim ${claim.reference}: ${label(to)}`,
		`Claim ${claim.reference} is decided: ${label(to)}. ${next}${why}\n\nThe assessment, point by point:\n${assessment.reasons.map((r) => `- ${r}`).join('\n')}`
	);
	return { state: to, recommendation: rec };
}

const EVIDENCE_KEYS = [
	'measuredCapacityAh',
	'measuredAtC',
	'throughputWh',
	'cycleCount',
	'avgCellTempC',
	'maxCellTempC',
	'eventsOutsideLimits',
	'description'
] as const;
const EVIDENCE_WORDS: Record<(typeof EVIDENCE_KEYS)[number], string> = {
	measuredCapacityAh: 'measured capacity (Ah)',
	measuredAtC: 'test temperature (°C)',
	throughputWh: 'throughput (Wh)',
	cycleCount: 'cycle count',
	avgCellTempC: 'average cell temperature (°C)',
	maxCellTempC: 'maximum cell temperature (°C)',
	eventsOutsideLimits: 'events outside limits',
	description: 'description'
};

/**
 * Adds or corrects evidence before the decision, by the filer's organisation or the
 * assembler's staff. Blank fields keep what is on record; the merged evidence is checked
 * like at filing. A claim waiting for evidence goes back under review.
 */
export async function addEvidence(
	db: Db,
	actor: Actor,
	claimId: number,
	patch: AddEvidenceInput,
	now = new Date()
) {
	if (!['dealer', 'field_tech', 'warranty', 'admin'].includes(actor.role))
		throw new ForbiddenError('Evidence is added by the dealer, a technician or warranty staff.');
	const claim = await loadClaim(db, actor, claimId);
	if (!AWAITING_DECISION.includes(claim.state))
		throw new ConflictError(
			`Claim ${claim.reference} is ${label(claim.state)}: evidence can no longer change the decision. Add a comment instead.`
		);
	const before = parseEvidence(claim.evidence);
	const given = Object.fromEntries(
		EVIDENCE_KEYS.filter(
			(k) => patch[k] !== undefined && patch[k] !== null && String(patch[k]).trim() !== ''
		).map((k) => [k, patch[k]])
	);
	const parsed = claimEvidenceSchema.safeParse({ ...before, ...given });
	if (!parsed.success) {
		const issues = toIssues(parsed.error);
		throw new InvalidInputError(`Check the evidence: ${issues[0].message}`, issues);
	}
	const after: StoredEvidence = {
		...parsed.data,
		throughputScope: patch.throughputScope ?? before.throughputScope,
		log: patch.log ?? before.log ?? null
	};
	const changed = EVIDENCE_KEYS.filter((k) => after[k] !== before[k]);
	if (after.throughputScope !== before.throughputScope && !changed.includes('throughputWh'))
		changed.push('throughputWh');
	const note = patch.comment?.trim() || null;
	if (!changed.length && !patch.log && !note)
		throw new InvalidInputError(
			'Nothing new: fill in at least one evidence field, or write a note.'
		);

	const [mod] = await db
		.select()
		.from(modules)
		.innerJoin(claimModules, eq(claimModules.moduleId, modules.id))
		.where(eq(claimModules.claimId, claim.id))
		.limit(1);
	const [model] = await db
		.select()
		.from(moduleModels)
		.where(eq(moduleModels.id, mod.modules.modelId));
	const implausible = implausibleEvidence(after, {
		model,
		moduleCount: await modulesInSystem(db, claim.systemId),
		startsOn: mod.modules.warrantyStartsOn,
		now
	});
	if (implausible.length) throw new InvalidInputError(implausible[0].message, implausible);

	const to: ClaimStateName = claim.state === 'awaiting_evidence' ? 'in_review' : claim.state;
	const what = changed.map(
		(k) =>
			`${EVIDENCE_WORDS[k]} ${k === 'description' || k === 'eventsOutsideLimits' ? 'updated' : `→ ${after[k] === undefined ? 'not given' : fmtNumber(after[k] as number, 2)}`}`
	);
	const comment = [
		`Evidence added${what.length ? `: ${what.join('; ')}` : patch.log ? ': inverter log summary' : ''}.`,
		note
	]
		.filter(Boolean)
		.join(' ');
	await writeTx(db, async (tx) => {
		await setState(tx, claim, { evidence: JSON.stringify(after), state: to }, now);
		await logStep(
			tx,
			actor,
			claim,
			to,
			comment,
			now,
			to !== claim.state ? `Claim ${claim.reference}: evidence added, ${label(to)}` : undefined
		);
		await recordAudit(tx, actor, {
			action: 'claim.evidence',
			entity: 'claim',
			entityId: claim.reference,
			before: { state: claim.state, evidence: before },
			after: { state: to, evidence: after },
			at: now
		});
	});
	if (to !== claim.state || actor.userId !== claim.filedBy) {
		await mailFiler(
			db,
			claim,
			`Claim ${claim.reference}: ${to !== claim.state ? label(to) : 'evidence added'}`,
			`${comment}\n\nClaim ${claim.reference} is ${label(to)}.`
		);
	}
	return { state: to };
}

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
	if (!['warranty', 'admin', 'field_tech'].includes(actor.role))
		throw new ForbiddenError('Replacements are recorded by warranty staff or a field technician.');
	const claim = await loadClaim(db, actor, claimId);
	if (claim.state !== 'covered')
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
		repl.state === 'in_stock' ||
		(repl.state === 'shipped' &&
			repl.dealerOrgId !== null &&
			repl.dealerOrgId === claim.dealerOrgId);
	if (!usable)
		throw new ConflictError(
			`${repl.serial} is ${STATE_LABELS[repl.state].toLowerCase()}: a replacement must be in stock, or shipped to this claim's dealer and not yet installed.`
		);
	const [slot] = await db.select().from(systemSlots).where(eq(systemSlots.moduleId, failed.id));
	const [sys] = await db
		.select({ name: systems.name })
		.from(systems)
		.where(eq(systems.id, claim.systemId));
	const where = slot
		? `string ${slot.stringNo}, position ${slot.position} of ${sys?.name ?? 'the system'}`
		: (sys?.name ?? 'the system');

	const allReplaced = await writeTx(db, async (tx) => {
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
		const moved = await tx
			.update(modules)
			.set({
				state: 'commissioned',
				systemId: failed.systemId ?? claim.systemId,
				dealerOrgId: failed.dealerOrgId,
				shippedAt: repl.shippedAt ?? now,
				commissionedAt: now,
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
			.set({ state: 'returned', systemId: null, updatedAt: now })
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
		if (!open.length) {
			await setState(tx, claim, { state: 'replacement_sent' }, now);
			await logStep(
				tx,
				actor,
				claim,
				'replacement_sent',
				'Every claimed module has its replacement.',
				now
			);
		}
		await recordAudit(tx, actor, {
			action: 'claim.replace',
			entity: 'claim',
			entityId: claim.reference,
			after: {
				failed: failed.serial,
				replacement: repl.serial,
				slot: slot ?? null,
				warrantyEndsOn: failed.warrantyEndsOn
			},
			at: now
		});
		return !open.length;
	});
	await mailFiler(
		db,
		claim,
		`Claim ${claim.reference}: ${allReplaced ? label('replacement_sent') : `replacement for ${failed.serial}`}`,
		`${failed.serial} is replaced by ${repl.serial} in ${where}. The replacement carries the rest of the original warranty${failed.warrantyEndsOn ? `, to ${failed.warrantyEndsOn}` : ''}.${allReplaced ? `\n\nEvery module of claim ${claim.reference} now has its replacement.` : ''}\n\nSend the failed module back as arranged; isolate it and protect its terminals for transport.`
	);
	return {
		replacement: repl.serial,
		state: allReplaced ? ('replacement_sent' as const) : claim.state
	};
}

/** Records what the inspection of a returned module found and its cause (one of RETURN_CAUSES). */
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
	if (!(input.cause in RETURN_CAUSES))
		throw new InvalidInputError('Choose the cause from the list.', [
			{ path: 'cause', message: 'Choose the cause from the list.' }
		]);
	const findings = input.findings.trim();
	if (findings.length < 10)
		throw new InvalidInputError('Write what the inspection found (at least 10 characters).', [
			{ path: 'findings', message: 'Write what the inspection found (at least 10 characters).' }
		]);
	const mod = await findModule(db, actor, serial);
	const [link] = await db
		.select()
		.from(claimModules)
		.where(and(eq(claimModules.claimId, claim.id), eq(claimModules.moduleId, mod.id)));
	if (!link) throw new NotFoundError(`${mod.serial} is not on claim ${claim.reference}.`);
	const cause = RETURN_CAUSES[input.cause];
	await writeTx(db, async (tx) => {
		await tx
			.update(claimModules)
			.set({ returnFindings: findings, returnCause: input.cause })
			.where(and(eq(claimModules.claimId, claim.id), eq(claimModules.moduleId, mod.id)));
		await recordEvent(tx, actor, {
			moduleId: mod.id,
			kind: 'claim_updated',
			summary: `Return inspection under claim ${claim.reference}: ${cause}`,
			detail: { claim: claim.reference, cause: input.cause, findings },
			at: now
		});
		await logStep(
			tx,
			actor,
			claim,
			claim.state,
			`Return inspection of ${mod.serial}: ${cause}. ${findings}`,
			now
		);
		await recordAudit(tx, actor, {
			action: 'claim.inspect',
			entity: 'claim',
			entityId: claim.reference,
			before: { returnCause: link.returnCause, returnFindings: link.returnFindings },
			after: { serial: mod.serial, returnCause: input.cause, returnFindings: findings },
			at: now
		});
	});
	return { serial: mod.serial, cause: input.cause };
}
