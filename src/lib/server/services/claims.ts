import { and, asc, count, desc, eq, inArray, lte, ne, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/sqlite-core';
import Papa from 'papaparse';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	claimEvents,
	claimModules,
	claims,
	logMappings,
	moduleModels,
	modules,
	organisations,
	sites,
	systems,
	users
} from '$lib/server/db/schema';
import { assertCan, dealerScopeOf, type Actor } from '$lib/server/actor';
import {
	ConflictError,
	ForbiddenError,
	InvalidInputError,
	NotFoundError
} from '$lib/server/errors';
import { sendMail } from '$lib/server/mail';
import { claimFiled, type Mail } from '$lib/server/mail/templates/claims';
import {
	detectColumns,
	InverterLogError,
	summariseLog,
	type LogMapping
} from '$lib/domain/inverter-log';
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
	AWAITING_DECISION,
	CLAIM_STATE_LABELS,
	TARGET_RESPONSE_DAYS,
	type ClaimQuery,
	type LogSummaryEvidence
} from '$lib/schemas/claim';
import { STATE_LABELS } from '$lib/module-states';
import { toIssues } from '$lib/server/validation';
import { isCalendarDate } from '$lib/domain/calendar';
import { recordAudit, recordEvent } from './audit';
import { findModule, serialFromScan } from './modules';
import {
	assessmentFor,
	implausibleEvidence,
	modulesInSystem,
	parseEvidence,
	type ClaimAssessmentResult,
	type StoredEvidence
} from './claim-assessment';
import { assemblerCalendar, businessDay, businessYear } from './calendar';
import { nextYearlyReference } from './sequences';
import {
	endOf,
	mayBeClaimed,
	mayBeClaimedOnDelivery,
	statesFrom
} from '$lib/domain/module-lifecycle';

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

/** The dealer whose remembered log mapping applies when staff file for a module (null: the assembler's own). */
export async function logDealerFor(
	db: Db,
	actor: Actor,
	scanText: string | null | undefined
): Promise<number | null> {
	const scope = dealerScopeOf(actor);
	if (scope !== null || !scanText?.trim()) return scope;
	try {
		return (await findModule(db, actor, await serialFromScan(db, actor, scanText))).dealerOrgId;
	} catch (e) {
		if (e instanceof NotFoundError) return null;
		throw e;
	}
}

/**
 * Reads an inverter log CSV for a claim's evidence. Without a mapping, the dealer's
 * remembered one is used when the file has its columns; otherwise the answer carries the
 * headers and a suggested mapping for the person to confirm. A confirmed mapping is
 * remembered for the dealer. A dealer's people always read with their own organisation's mapping.
 */
export async function readInverterLog(
	db: Db,
	actor: Actor,
	dealerOrgId: number | null,
	csvText: string,
	mapping?: LogMapping,
	now = new Date()
) {
	const org = dealerScopeOf(actor) ?? dealerOrgId;
	const headers = (
		(Papa.parse<string[]>(csvText.replace(/^\uFEFF/, ''), { preview: 1 }).data[0] ?? []) as string[]
	)
		.map((h) => h.trim())
		.filter(Boolean);
	if (!headers.length)
		throw new InvalidInputError('The log has no header row: export it again with column names.');
	const guess = detectColumns(headers);
	const energy = guess.dischargeEnergyKWh ?? guess.dischargeEnergyWh;
	const suggested: Partial<LogMapping> = {
		timestampColumn: guess.timestamp,
		energyColumn: energy,
		energyUnit: guess.dischargeEnergyKWh ? 'kWh' : guess.dischargeEnergyWh ? 'Wh' : undefined,
		energyKind: guess.energyKind ?? 'cumulative',
		tempColumn: guess.cellTempC
	};
	const [stored] =
		org === null ? [] : await db.select().from(logMappings).where(eq(logMappings.dealerOrgId, org));
	const remembered = stored ? (JSON.parse(stored.mapping) as LogMapping) : null;
	const fits = (m: LogMapping) =>
		[m.timestampColumn, m.energyColumn, m.tempColumn].every((c) => !c || headers.includes(c));
	const use = mapping ?? (remembered && fits(remembered) ? remembered : null);
	if (!use)
		return {
			headers,
			suggested,
			remembered,
			mapping: null,
			usedRemembered: false,
			summary: null,
			evidence: null
		};

	let summary;
	try {
		summary = summariseLog(csvText, use);
	} catch (e) {
		if (e instanceof InverterLogError) throw new InvalidInputError(e.message);
		throw e;
	}
	const lastDay = summary.lastAt?.slice(0, 10) ?? '';
	if (isCalendarDate(lastDay) && lastDay > (await businessDay(db, now)))
		summary.problems.push(
			`The last row is dated ${summary.lastAt}, after today: check the inverter's clock.`
		);
	if (mapping && org !== null && JSON.stringify(mapping) !== stored?.mapping) {
		await writeTx(db, async (tx) => {
			const value = JSON.stringify(mapping);
			await tx
				.insert(logMappings)
				.values({ dealerOrgId: org, mapping: value, updatedAt: now })
				.onConflictDoUpdate({
					target: logMappings.dealerOrgId,
					set: { mapping: value, updatedAt: now }
				});
			await recordAudit(tx, actor, {
				action: 'log_mapping.save',
				entity: 'organisation',
				entityId: org,
				before: remembered ?? undefined,
				after: mapping,
				at: now
			});
		});
	}
	return {
		headers,
		suggested,
		remembered,
		mapping: use,
		usedRemembered: !mapping,
		summary,
		evidence: {
			throughputWh: summary.throughputWh,
			avgCellTempC: summary.avgTempC,
			maxCellTempC: summary.maxTempC
		}
	};
}

const modelsOf = sql<
	string | null
>`(SELECT group_concat(DISTINCT mm.code) FROM claim_modules cm JOIN modules m ON m.id = cm.module_id JOIN module_models mm ON mm.id = m.model_id WHERE cm.claim_id = ${claims.id})`;
const serialCountOf = sql<number>`(SELECT count(*) FROM claim_modules cm WHERE cm.claim_id = ${claims.id})`;

/**
 * The claims queue, oldest claim first unless sorted otherwise: filters by state,
 * dealer, model, minimum age and serial (exact or its beginning); a dealer's people see their organisation's claims only
 * (a dealer filter from them is ignored). Each item says whether it is past the
 * response-time target ({@link TARGET_RESPONSE_DAYS} calendar days to a decision).
 */
export async function listClaims(
	db: Db,
	actor: Actor,
	q: Partial<ClaimQuery> = {},
	now = new Date()
) {
	const page = q.page ?? 1;
	const pageSize = Math.min(q.pageSize ?? 25, 100);
	const scope = dealerScopeOf(actor);
	const where: SQL[] = [];
	if (scope !== null) where.push(eq(claims.dealerOrgId, scope));
	else if (q.dealer) where.push(eq(claims.dealerOrgId, q.dealer));
	if (q.state) where.push(eq(claims.state, q.state));
	if (q.model)
		where.push(
			sql`EXISTS (SELECT 1 FROM claim_modules cm JOIN modules m ON m.id = cm.module_id JOIN module_models mm ON mm.id = m.model_id WHERE cm.claim_id = ${claims.id} AND mm.code = ${q.model})`
		);
	// Exact or prefix: the schema allows only letters, digits and hyphens, so the text holds
	// no LIKE wildcard; the serial index answers a prefix LIKE (case-sensitive LIKE below).
	if (q.serial)
		where.push(
			sql`EXISTS (SELECT 1 FROM claim_modules cm JOIN modules m ON m.id = cm.module_id WHERE cm.claim_id = ${claims.id} AND (m.serial = ${q.serial} OR substr(m.serial, 1, ${q.serial.length}) = ${q.serial}))`
		);
	if (q.minAgeDays)
		where.push(lte(claims.filedAt, new Date(now.getTime() - q.minAgeDays * DAY_MS)));
	const cond = where.length ? and(...where) : undefined;

	const dir = q.dir === 'desc' ? desc : asc;
	const sortCol = {
		reference: claims.reference,
		state: claims.state,
		dealer: organisations.name,
		models: modelsOf,
		serialCount: serialCountOf,
		filedAt: claims.filedAt
	}[q.sort ?? 'filedAt'];
	const [{ total }] = await db.select({ total: count() }).from(claims).where(cond);
	const rows = await db
		.select({
			id: claims.id,
			reference: claims.reference,
			state: claims.state,
			fault: claims.fault,
			dealer: organisations.name,
			models: modelsOf,
			serialCount: serialCountOf,
			filedAt: claims.filedAt
		})
		.from(claims)
		.leftJoin(organisations, eq(claims.dealerOrgId, organisations.id))
		.where(cond)
		.orderBy(dir(sortCol), dir(claims.id))
		.limit(pageSize)
		.offset((page - 1) * pageSize);
	const items = rows.map((r) => {
		const ageMs = now.getTime() - r.filedAt.getTime();
		return {
			...r,
			stateLabel: CLAIM_STATE_LABELS[r.state],
			dealer: r.dealer ?? 'Tidewater Cellworks (own site)',
			models: r.models ? r.models.split(',') : [],
			serialCount: Number(r.serialCount),
			filedAt: r.filedAt.toISOString(),
			ageDays: Math.floor(ageMs / DAY_MS),
			overdue: AWAITING_DECISION.includes(r.state) && ageMs > TARGET_RESPONSE_DAYS * DAY_MS
		};
	});
	return { items, total, page, pageSize };
}

/** The choices of the queue's filters: dealers (staff only) and models. */
export async function claimFilterOptions(db: Db, actor: Actor) {
	const dealers = actor.dealerScoped
		? []
		: await db
				.select({ id: organisations.id, name: organisations.name })
				.from(organisations)
				.where(eq(organisations.kind, 'dealer'))
				.orderBy(asc(organisations.name));
	const models = (
		await db.select({ code: moduleModels.code }).from(moduleModels).orderBy(asc(moduleModels.code))
	).map((m) => m.code);
	return { dealers, models };
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
