/**
 * Returns of failed modules under a covered claim: the return authorisation number given
 * when the replacement is recorded, then the workshop's steps — scanned in with its condition
 * on arrival, inspected once (findings and cause), then reworked, kept for analysis or
 * scrapped. Each step is on the module's timeline and the claim's, audited, and e-mailed to
 * the claim's filer with the claim's address. Dealers see the steps on their claim; only the
 * assembler's workshop and warranty staff take them.
 */
import { and, desc, eq, isNotNull, isNull, or } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { claimModules, claims, moduleModels, modules } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { checkRule, ConflictError, ForbiddenError } from '$lib/server/errors';
import { assertTransition, MODULE_MOVES } from '$lib/domain/module-lifecycle';
import {
	needsQuarantine,
	RA_SEQUENCE,
	refusalOf,
	RETURN_ACTION_MOVES,
	returnActionsAt,
	returnStep,
	describeReturnStep,
	type ArrivalCondition,
	type ReturnOutcome
} from '$lib/domain/returns';
import type { ReturnActionInput } from '$lib/schemas/returns';
import { returnStepMail } from '$lib/server/mail/templates/returns';
import { recordAudit, recordEvent } from './audit';
import { businessYear } from './calendar';
import { findModule, serialFromScan } from './modules';
import { mailFiler, type ClaimRow } from './claims';
import { logStep } from './claim-steps';
import { applyRework, applyScrap } from './workshop';
import { nextYearlyReference } from './sequences';

const STAFF_ONLY =
	'Returns are scanned in and handled by the assembler’s workshop and warranty staff.';

/**
 * Gives the failed module of a covered claim its return authorisation number (RA-{year}-{NNNN},
 * the next of the assembler's calendar year) inside the replacement's transaction, and puts
 * "on its way back" on its timeline.
 */
export async function authoriseReturn(
	tx: Tx,
	actor: Actor,
	claim: Pick<ClaimRow, 'id' | 'reference'>,
	failed: { id: number; serial: string },
	now: Date
): Promise<string> {
	const year = await businessYear(tx, now);
	const raNumber = await nextYearlyReference(tx, claimModules, claimModules.raNumber, {
		...RA_SEQUENCE,
		year
	});
	await tx
		.update(claimModules)
		.set({ raNumber })
		.where(and(eq(claimModules.claimId, claim.id), eq(claimModules.moduleId, failed.id)));
	await recordEvent(tx, actor, {
		moduleId: failed.id,
		kind: 'return_authorised',
		summary: `On its way back under return ${raNumber} (claim ${claim.reference})`,
		detail: { claim: claim.reference, raNumber },
		at: now
	});
	return raNumber;
}

/** The module's newest authorised return, with its claim; null when none was authorised. */
async function returnOf(db: Db, moduleId: number) {
	const [row] = await db
		.select({ link: claimModules, claim: claims })
		.from(claimModules)
		.innerJoin(claims, eq(claimModules.claimId, claims.id))
		.where(and(eq(claimModules.moduleId, moduleId), isNotNull(claimModules.raNumber)))
		.orderBy(desc(claimModules.raNumber))
		.limit(1);
	return row ?? null;
}

function requireStaff(actor: Actor) {
	if (actor.dealerScoped) throw new ForbiddenError(STAFF_ONLY);
	assertCan(actor, 'handleReturn', STAFF_ONLY);
}

/** A return as the returns desk shows it. */
export async function findReturn(db: Db, actor: Actor, scan: string, baseUrl?: string) {
	requireStaff(actor);
	const mod = await findModule(db, actor, await serialFromScan(db, actor, scan, baseUrl));
	const found = await returnOf(db, mod.id);
	if (!found)
		throw new ConflictError(
			`${mod.serial} has no return authorised: a module comes back once the replacement of a covered claim is recorded.`
		);
	const { link, claim } = found;
	const step = returnStep(link);
	return {
		serial: mod.serial,
		state: mod.state,
		raNumber: link.raNumber!,
		claimId: claim.id,
		claimReference: claim.reference,
		step,
		arrivalCondition: link.arrivalCondition as ArrivalCondition | null,
		// Until it is inspected, a module damaged on arrival stays in quarantine.
		quarantine:
			step === 'received' &&
			!!link.arrivalCondition &&
			needsQuarantine(link.arrivalCondition as ArrivalCondition),
		returnCause: link.returnCause,
		returnFindings: link.returnFindings,
		returnOutcome: link.returnOutcome,
		actions: returnActionsAt(step, link.returnOutcome)
	};
}

/**
 * Takes the next step of a module's return: `receive` (condition on arrival), `inspect`
 * (findings and cause, once), then `rework` (back to built, to be retested), `keep` (for
 * analysis) or `scrap`. A step out of order, a second inspection or a module with no return
 * is refused with what to do instead, and nothing is stored.
 */
export async function actOnReturn(
	db: Db,
	actor: Actor,
	scan: string,
	input: ReturnActionInput,
	baseUrl?: string,
	now = new Date()
) {
	requireStaff(actor);
	if ('note' in input && !input.note) input = { ...input, note: undefined };
	const mod = await findModule(db, actor, await serialFromScan(db, actor, scan, baseUrl));
	const found = await returnOf(db, mod.id);
	if (!found)
		throw new ConflictError(
			`${mod.serial} is not on its way back: no return was authorised for it. Check the serial on the label.`
		);
	const { link, claim } = found;
	const raNumber = link.raNumber!;
	const step = returnStep(link);
	const refusal = refusalOf(input.action, { raNumber, step, outcome: link.returnOutcome });
	if (refusal) throw new ConflictError(refusal);
	const { move, outcome } = RETURN_ACTION_MOVES[input.action];
	const to = MODULE_MOVES[move].to[0];
	checkRule(() => assertTransition(mod.state, move, to));

	const where = and(eq(claimModules.claimId, claim.id), eq(claimModules.moduleId, mod.id));
	const { summary, detail } = describeReturnStep(input, raNumber, claim.reference);
	await writeTx(db, async (tx) => {
		if (input.action === 'rework') await applyRework(tx, actor, mod, input.work, now);
		else if (input.action === 'scrap') await applyScrap(tx, actor, mod, input.reason, now);
		else {
			const moved = await tx
				.update(modules)
				.set({ state: to, updatedAt: now })
				.where(and(eq(modules.id, mod.id), eq(modules.state, mod.state)))
				.returning({ id: modules.id });
			if (!moved.length) throw new ConflictError(`${mod.serial} changed meanwhile; scan it again.`);
		}
		const stepGuard =
			input.action === 'receive'
				? isNull(claimModules.receivedAt)
				: input.action === 'inspect'
					? isNull(claimModules.inspectedAt)
					: or(
							isNull(claimModules.returnOutcome),
							eq(claimModules.returnOutcome, 'kept_for_analysis')
						);
		const set =
			input.action === 'receive'
				? { receivedAt: now, receivedBy: actor.userId, arrivalCondition: input.condition }
				: input.action === 'inspect'
					? {
							inspectedAt: now,
							inspectedBy: actor.userId,
							returnFindings: input.findings,
							returnCause: input.cause
						}
					: { returnOutcome: outcome as ReturnOutcome, returnOutcomeAt: now };
		const done = await tx
			.update(claimModules)
			.set(set)
			.where(and(where, stepGuard))
			.returning({ id: claimModules.moduleId });
		if (!done.length)
			throw new ConflictError(`Return ${raNumber} changed meanwhile; scan it again.`);
		if (input.action === 'receive' || input.action === 'inspect' || input.action === 'keep')
			await recordEvent(tx, actor, {
				moduleId: mod.id,
				kind:
					input.action === 'receive'
						? 'return_received'
						: input.action === 'inspect'
							? 'return_inspected'
							: 'kept_for_analysis',
				summary,
				detail,
				at: now
			});
		await logStep(tx, actor, claim, claim.state, summary, now);
		await recordAudit(tx, actor, {
			action: `return.${input.action}`,
			entity: 'module',
			entityId: mod.serial,
			before: { state: mod.state, step },
			after: { state: to, ...detail },
			at: now
		});
	});
	await mailFiler(
		db,
		claim,
		returnStepMail({
			action: input.action,
			serial: mod.serial,
			raNumber,
			claimReference: claim.reference,
			summary
		})
	);
	return {
		serial: mod.serial,
		raNumber,
		state: to,
		outcome,
		step: returnStep({ ...link, ...stepAfter(input.action, now, outcome) })
	};
}

function stepAfter(action: ReturnActionInput['action'], now: Date, outcome: ReturnOutcome | null) {
	if (action === 'receive') return { receivedAt: now };
	if (action === 'inspect') return { inspectedAt: now };
	return { returnOutcome: outcome };
}

/** Returns still open (on their way, received, inspected or kept for analysis), oldest first. */
export async function listOpenReturns(db: Db, actor: Actor) {
	requireStaff(actor);
	const rows = await db
		.select({
			serial: modules.serial,
			modelCode: moduleModels.code,
			raNumber: claimModules.raNumber,
			claimId: claims.id,
			claimReference: claims.reference,
			receivedAt: claimModules.receivedAt,
			inspectedAt: claimModules.inspectedAt,
			returnOutcome: claimModules.returnOutcome,
			arrivalCondition: claimModules.arrivalCondition
		})
		.from(claimModules)
		.innerJoin(claims, eq(claimModules.claimId, claims.id))
		.innerJoin(modules, eq(claimModules.moduleId, modules.id))
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.where(
			and(
				isNotNull(claimModules.raNumber),
				or(isNull(claimModules.returnOutcome), eq(claimModules.returnOutcome, 'kept_for_analysis'))
			)
		)
		.orderBy(claimModules.raNumber)
		.limit(200);
	return rows.map((r) => ({ ...r, raNumber: r.raNumber!, step: returnStep(r) }));
}
