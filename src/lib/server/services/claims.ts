/**
 * A warranty claim's core: loading it within the actor's scope, the officer check, the
 * filer's e-mail and the claim as its page shows it. Filing (claim-filing), the queue
 * (claim-queue), the inverter log (claim-log) and the workflow (claim-workflow) live beside it.
 */
import { asc, eq, inArray } from 'drizzle-orm';
import { alias } from 'drizzle-orm/sqlite-core';
import type { Db, Tx } from '$lib/server/db';
import {
	claimEvents,
	claimModules,
	claims,
	moduleModels,
	modules,
	organisations,
	sites,
	systems,
	users
} from '$lib/server/db/schema';
import { assertCan, dealerScopeOf, type Actor } from '$lib/server/actor';
import { ForbiddenError, NotFoundError } from '$lib/server/errors';
import { sendMail } from '$lib/server/mail';
import { type Mail } from '$lib/server/mail/templates/claims';
import { AWAITING_DECISION, TARGET_RESPONSE_DAYS } from '$lib/schemas/claim';
import { assessmentFor, parseEvidence, type ClaimAssessmentResult } from './claim-assessment';

export { TARGET_RESPONSE_DAYS };
type Conn = Db | Tx;
export type ClaimRow = typeof claims.$inferSelect;

const DAY_MS = 86_400_000;

/** The claim if the actor may see it: a dealer's people see their organisation's claims only. */
export async function loadClaim(conn: Conn, actor: Actor, claimId: number): Promise<ClaimRow> {
	const notFound = new NotFoundError(`Claim #${claimId} is not in the register.`);
	if (!Number.isInteger(claimId) || claimId < 1) throw notFound;
	const [claim] = await conn.select().from(claims).where(eq(claims.id, claimId));
	const scope = dealerScopeOf(actor);
	if (!claim || (scope !== null && claim.dealerOrgId !== scope)) throw notFound;
	return claim;
}

/** Warranty officers and administrators of the assembler move and decide claims; nobody else. */
export function requireOfficer(actor: Actor): void {
	if (actor.dealerScoped)
		throw new ForbiddenError(
			'Only a warranty officer or an administrator moves and decides claims.'
		);
	assertCan(
		actor,
		'decideClaim',
		'Only a warranty officer or an administrator moves and decides claims.'
	);
}

/** Tells the person who filed the claim what happened to it. */
export async function mailFiler(
	db: Db,
	claim: ClaimRow,
	{ subject, text: body }: Mail
): Promise<void> {
	const [filer] = await db
		.select({ email: users.email, name: users.name })
		.from(users)
		.where(eq(users.id, claim.filedBy));
	if (!filer) return;
	await sendMail(db, {
		to: filer.email,
		subject,
		text: `Hello ${filer.name},\n\n${body}\n\nTidewater Cellworks warranty`,
		about: `/claims/${claim.id}`
	});
}

/** A claim as its page shows it: context, modules with their replacements, timeline and the live assessment. */
export async function getClaim(db: Db, actor: Actor, claimId: number, now = new Date()) {
	const claim = await loadClaim(db, actor, claimId);
	const [system] =
		claim.systemId === null
			? []
			: await db
					.select({
						id: systems.id,
						name: systems.name,
						siteName: sites.name,
						series: systems.series,
						parallel: systems.parallel,
						inverterName: systems.inverterName,
						modelCode: moduleModels.code
					})
					.from(systems)
					.innerJoin(sites, eq(systems.siteId, sites.id))
					.innerJoin(moduleModels, eq(systems.modelId, moduleModels.id))
					.where(eq(systems.id, claim.systemId));
	const [dealer] = claim.dealerOrgId
		? await db
				.select({ name: organisations.name })
				.from(organisations)
				.where(eq(organisations.id, claim.dealerOrgId))
		: [];
	const people = await db
		.select({ id: users.id, name: users.name, email: users.email })
		.from(users)
		.where(inArray(users.id, [claim.filedBy, claim.decidedBy ?? claim.filedBy]));
	const replacement = alias(modules, 'replacement');
	const mods = await db
		.select({
			serial: modules.serial,
			state: modules.state,
			modelCode: moduleModels.code,
			warrantyStartsOn: modules.warrantyStartsOn,
			warrantyEndsOn: modules.warrantyEndsOn,
			replacementSerial: replacement.serial,
			returnFindings: claimModules.returnFindings,
			returnCause: claimModules.returnCause,
			raNumber: claimModules.raNumber,
			receivedAt: claimModules.receivedAt,
			arrivalCondition: claimModules.arrivalCondition,
			inspectedAt: claimModules.inspectedAt,
			returnOutcome: claimModules.returnOutcome,
			returnOutcomeAt: claimModules.returnOutcomeAt
		})
		.from(claimModules)
		.innerJoin(modules, eq(claimModules.moduleId, modules.id))
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.leftJoin(replacement, eq(claimModules.replacementModuleId, replacement.id))
		.where(eq(claimModules.claimId, claim.id))
		.orderBy(asc(modules.serial));
	const events = await db
		.select()
		.from(claimEvents)
		.where(eq(claimEvents.claimId, claim.id))
		.orderBy(asc(claimEvents.at), asc(claimEvents.id));
	const ageMs = now.getTime() - claim.filedAt.getTime();
	return {
		claim: {
			id: claim.id,
			reference: claim.reference,
			state: claim.state,
			fault: claim.fault,
			evidence: parseEvidence(claim.evidence),
			decision: claim.decision,
			decisionReason: claim.decisionReason,
			decidedAt: claim.decidedAt,
			decidedBy: people.find((p) => p.id === claim.decidedBy)?.name ?? null,
			kind: claim.kind,
			evidenceRequest:
				claim.state === 'awaiting_evidence' && claim.evidenceRequest
					? { text: claim.evidenceRequest, at: claim.evidenceRequestedAt }
					: null,
			storedAssessment: claim.assessment
				? (JSON.parse(claim.assessment) as ClaimAssessmentResult)
				: null,
			filedAt: claim.filedAt,
			filedBy: people.find((p) => p.id === claim.filedBy) ?? null,
			dealer: dealer?.name ?? null,
			ageDays: Math.floor(ageMs / DAY_MS),
			overdue: AWAITING_DECISION.includes(claim.state) && ageMs > TARGET_RESPONSE_DAYS * DAY_MS
		},
		system: system ?? null,
		modules: mods,
		events,
		assessment: await assessmentView(db, actor, claim)
	};
}

/**
 * What a dealer sees before the decision: the evidence facts the assessment derived
 * (throughput per module, stop-charge proof), not its recommendation or reasons — those
 * come with the officer's decision, so the filer is not promised what the officer may not
 * grant. Assembler staff always see the live assessment.
 */
export type WithheldAssessment = Pick<ClaimAssessmentResult, 'throughputShare' | 'stopCharge'> & {
	withheld: true;
};

async function assessmentView(
	db: Db,
	actor: Actor,
	claim: Parameters<typeof assessmentFor>[1] & { decision: string | null }
): Promise<ClaimAssessmentResult | WithheldAssessment> {
	const live = await assessmentFor(db, claim);
	if (dealerScopeOf(actor) === null || claim.decision) return live;
	return { withheld: true, throughputShare: live.throughputShare, stopCharge: live.stopCharge };
}
