/**
 * Filing a warranty claim of any kind (in service or on delivery): the modules' scope and
 * state, the fault list of the kind, evidence checked for form and plausibility, photos, the
 * CL-{year}-{NNNN} number, and the filer's e-mail.
 */
import { and, eq, inArray, ne } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { claimEvents, claimModules, claims, moduleModels, modules } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { ConflictError, ForbiddenError, InvalidInputError } from '$lib/server/errors';
import { claimFiled } from '$lib/server/mail/templates/claims';
import { claimEvidenceSchema, faultEvidenceSchema } from '$lib/schemas/warranty-assess';
import {
	CLAIM_FAULTS,
	claimKindFor,
	faultsFor,
	needsThroughput,
	type ClaimFault,
	type ClaimKind
} from '$lib/domain/claim-workflow';
import { checkPhoto, savePhoto } from './attachments';
import {
	CLAIM_STATE_LABELS,
	TARGET_RESPONSE_DAYS,
	type LogSummaryEvidence
} from '$lib/schemas/claim';
import { STATE_LABELS } from '$lib/module-states';
import { toIssues } from '$lib/server/validation';
import { recordAudit, recordEvent } from './audit';
import { findModule, serialFromScan } from './modules';
import { implausibleEvidence, type StoredEvidence } from './claim-assessment';
import { modulesInSystem } from './claim-system-facts';
import { assemblerCalendar, businessDay, businessYear } from './calendar';
import { nextYearlyReference } from './sequences';
import {
	endOf,
	mayBeClaimed,
	mayBeClaimedOnDelivery,
	statesFrom
} from '$lib/domain/module-lifecycle';
import { mailFiler } from './claims';

export interface FileClaimInput {
	/** In service (default) or on delivery. */
	kind?: ClaimKind;
	/** As scanned or typed: bare serials, our label URLs or GS1 Digital Links. */
	serials: string[];
	/** A fault from CLAIM_FAULTS; an in-service claim may still name one in words. */
	fault: string;
	/** The calendar day the fault was first seen (YYYY-MM-DD), not after today. */
	observedOn?: string | null;
	/** Photos filed with the claim: each checked before anything is stored. */
	photos?: { name: string; type: string; bytes: Uint8Array }[];
	/** Checked here with claimEvidenceSchema (form strings or numbers). */
	evidence: unknown;
	throughputScope?: 'system' | 'module';
	log?: LogSummaryEvidence | null;
	baseUrl?: string;
}

/**
 * Files a claim on modules of one commissioned system. A dealer's people can only name
 * their organisation's modules (another dealer's serial answers like an unknown one);
 * modules must be in service and on no other claim that is not closed. The evidence is
 * checked for form and for plausibility. Modules go to "Under claim"; the filer gets an e-mail.
 */
export async function fileClaim(db: Db, actor: Actor, input: FileClaimInput, now = new Date()) {
	if (actor.userId === null)
		throw new ForbiddenError('Claims are filed by dealers, technicians and warranty staff.');
	assertCan(actor, 'fileClaim', 'Claims are filed by dealers, technicians and warranty staff.');
	const kind: ClaimKind = input.kind ?? 'in-service';
	const { fault, faultCode } = faultOf(kind, input.fault);
	const observedOn = input.observedOn ?? null;
	if (observedOn !== null && observedOn > (await businessDay(db, now)))
		throw new InvalidInputError('The day the fault was seen cannot be after today.', [
			{ path: 'observedOn', message: 'The day the fault was seen cannot be after today.' }
		]);
	const photos = input.photos ?? [];
	if (photos.length > 10) throw new InvalidInputError('Attach at most 10 photos to a new claim.');
	for (const p of photos) checkPhoto(p);
	const throughputNeeded =
		kind === 'in-service' && (faultCode === null || needsThroughput(faultCode));
	const parsed = (throughputNeeded ? claimEvidenceSchema : faultEvidenceSchema).safeParse(
		input.evidence
	);
	if (!parsed.success) {
		const issues = toIssues(parsed.error);
		throw new InvalidInputError(`Check the evidence: ${issues[0].message}`, issues);
	}
	const texts = [...new Set(input.serials.map((s) => s.trim()).filter(Boolean))];
	if (!texts.length)
		throw new InvalidInputError('Scan or type the serial of at least one module.', [
			{ path: 'serials', message: 'Scan or type the serial of at least one module.' }
		]);
	if (texts.length > 50) throw new InvalidInputError('One claim covers at most 50 modules.');

	const mods: (typeof modules.$inferSelect)[] = [];
	for (const text of texts) {
		const mod = await findModule(db, actor, await serialFromScan(db, actor, text, input.baseUrl));
		if (!mods.some((m) => m.id === mod.id)) mods.push(mod);
	}
	const open = await db
		.select({ serial: modules.serial, reference: claims.reference, state: claims.state })
		.from(claimModules)
		.innerJoin(claims, eq(claimModules.claimId, claims.id))
		.innerJoin(modules, eq(claimModules.moduleId, modules.id))
		.where(
			and(
				inArray(
					claimModules.moduleId,
					mods.map((m) => m.id)
				),
				ne(claims.state, 'closed')
			)
		);
	if (open.length) {
		const o = open[0];
		throw new ConflictError(
			`${o.serial} is already on claim ${o.reference} (${CLAIM_STATE_LABELS[o.state]}); that claim must be closed before another is filed.`
		);
	}
	for (const m of mods) assertKindFits(kind, m);
	const systemId = kind === 'on-delivery' ? null : mods[0].systemId;
	if (kind === 'in-service') {
		if (systemId === null)
			throw new ConflictError(
				`${mods[0].serial} is not recorded in any system; a claim needs the system's commissioning record.`
			);
		if (mods.some((m) => m.systemId !== systemId))
			throw new ConflictError('These modules are in different systems: file one claim per system.');
	} else if (mods.some((m) => m.dealerOrgId !== mods[0].dealerOrgId))
		throw new ConflictError('These modules went to different dealers: file one claim per dealer.');

	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, mods[0].modelId));
	const moduleCount = await modulesInSystem(db, systemId);
	const evidence: StoredEvidence = {
		...parsed.data,
		throughputScope: input.throughputScope ?? 'system',
		log: input.log ?? null
	};
	const implausible =
		kind === 'in-service'
			? implausibleEvidence(evidence, {
					model,
					moduleCount,
					startsOn: mods[0].warrantyStartsOn,
					now,
					calendar: await assemblerCalendar(db)
				})
			: [];
	if (implausible.length) throw new InvalidInputError(implausible[0].message, implausible);
	const move = kind === 'on-delivery' ? 'claimOnDelivery' : 'openClaim';

	const claim = await writeTx(db, async (tx) => {
		const reference = await nextReference(tx, now);
		const taken = await tx
			.update(modules)
			.set({ state: endOf(move), updatedAt: now })
			.where(
				and(
					inArray(
						modules.id,
						mods.map((m) => m.id)
					),
					inArray(modules.state, statesFrom(move))
				)
			)
			.returning({ id: modules.id });
		if (taken.length !== mods.length)
			throw new ConflictError(
				'One of these modules changed while the claim was filed; reload and try again.'
			);
		const [row] = await tx
			.insert(claims)
			.values({
				reference,
				kind,
				systemId,
				dealerOrgId: mods[0].dealerOrgId,
				state: 'filed',
				fault,
				faultCode,
				observedOn,
				evidence: JSON.stringify(evidence),
				filedBy: actor.userId!,
				filedAt: now,
				updatedAt: now
			})
			.returning();
		await tx.insert(claimModules).values(mods.map((m) => ({ claimId: row.id, moduleId: m.id })));
		await tx.insert(claimEvents).values({
			claimId: row.id,
			at: now,
			actorUserId: actor.userId,
			actorLabel: actor.label,
			fromState: null,
			toState: 'filed',
			comment: fault
		});
		for (const m of mods)
			await recordEvent(tx, actor, {
				moduleId: m.id,
				kind: 'claim_filed',
				summary: `Claim ${reference} filed: ${fault}`,
				detail: { claim: reference },
				at: now
			});
		await recordAudit(tx, actor, {
			action: 'claim.file',
			entity: 'claim',
			entityId: reference,
			after: { kind, serials: mods.map((m) => m.serial), fault, faultCode, observedOn, evidence },
			at: now
		});
		return row;
	});
	for (const p of photos)
		await savePhoto(
			db,
			actor,
			{ ownerKind: 'claim', ownerId: claim.id },
			p,
			'Filed with the claim'
		);
	await mailFiler(
		db,
		claim,
		claimFiled({
			reference: claim.reference,
			fault,
			serials: mods.map((m) => m.serial),
			targetDays: TARGET_RESPONSE_DAYS
		})
	);
	return { id: claim.id, reference: claim.reference, number: claim.reference };
}

/** The fault in words and its code; a kind only files the faults of its list. */
function faultOf(kind: ClaimKind, given: string): { fault: string; faultCode: ClaimFault | null } {
	const text = (given ?? '').trim();
	const allowed = faultsFor(kind);
	if ((allowed as string[]).includes(text))
		return { fault: CLAIM_FAULTS[text as ClaimFault].label, faultCode: text as ClaimFault };
	const message = `A claim ${kind === 'on-delivery' ? 'on delivery' : 'in service'} names one of these faults: ${allowed.map((f) => `${f} (${CLAIM_FAULTS[f].label})`).join(', ')}.`;
	// Claims filed in words before the list existed (and the seed's) stay possible in service.
	if (kind === 'in-service' && !(text in CLAIM_FAULTS) && text.length >= 3 && text.length <= 200)
		return { fault: text, faultCode: null };
	throw new InvalidInputError(message, [{ path: 'fault', message }]);
}

/** Refuses a module the kind of claim does not fit, saying which kind does. */
function assertKindFits(
	kind: ClaimKind,
	m: { serial: string; state: string; dealerOrgId: number | null }
) {
	const fits =
		kind === 'on-delivery'
			? mayBeClaimedOnDelivery(m.state) && m.dealerOrgId !== null
			: mayBeClaimed(m.state);
	if (fits) return;
	const words = STATE_LABELS[m.state].toLowerCase();
	const other = claimKindFor(m.state);
	const hint =
		other && other !== kind
			? ` File a claim ${other === 'in-service' ? 'in service (kind "in-service")' : 'on delivery (kind "on-delivery")'} for it instead.`
			: ' No kind of claim fits a module in this state.';
	throw new ConflictError(
		kind === 'on-delivery'
			? `${m.serial} is ${words}: a claim on delivery is for a module shipped to a dealer and not yet installed.${hint}`
			: `${m.serial} is ${words}, not in service: an in-service claim is for modules of a commissioned system.${hint}`
	);
}

/** CL-{year}-{NNNN}: the next number of the assembler's calendar year, inside the caller's write transaction. */
async function nextReference(tx: Tx, now: Date): Promise<string> {
	const year = await businessYear(tx, now);
	return nextYearlyReference(tx, claims, claims.reference, { code: 'CL', year, width: 4 });
}
