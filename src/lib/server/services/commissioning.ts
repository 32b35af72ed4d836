import { and, asc, avg, desc, eq, inArray } from 'drizzle-orm';
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	attachments,
	commissionings,
	factoryTests,
	moduleModels,
	modules,
	organisations,
	sites,
	systems,
	systemSlots
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { sendMail } from '$lib/server/mail';
import {
	evaluateCommissioning,
	readingsTable,
	systemCurrentLimitA,
	type CommissioningItem,
	type CommissioningMeasurements,
	type CommissioningSystem,
	type ReadingRow
} from '$lib/domain/commissioning';
import type { Signature } from '$lib/schemas/signature';
import { warrantyTermEnd } from '$lib/domain/warranty';
import { STATE_LABELS } from '$lib/module-states';
import {
	CODES_TAKE_PRECEDENCE,
	COMMISSIONING_CAUTIONS,
	toMeasurements,
	type CommissioningInput,
	type MeasurementsInput
} from '$lib/schemas/commissioning';
import { recordAudit, recordEvent } from './audit';
import { certificatePdf } from './certificate-pdf';
import { configuredBaseUrl } from '$lib/server/base-url';
import { businessDay } from './calendar';
import { nextYearlyReference } from './sequences';
import { findSystem } from './systems';
import { warrantyTermsOf } from '$lib/domain/model';
import { readAttachment } from './attachments';
import { ruleSetById, ruleSetInForce, type StoredRuleSet } from './rule-sets';
import { endOf, mayMove, statesFrom } from '$lib/domain/module-lifecycle';

const roundMv = (x: number) => Math.round(x * 1000) / 1000;

export interface CertificateData {
	commissioningId: number;
	certificateNo: string;
	commissionedOn: string;
	site: { name: string; address: string; dealerOrgId: number | null };
	system: {
		id: number;
		name: string;
		modelCode: string;
		modelName: string;
		series: number;
		parallel: number;
		inverterName: string | null;
		minV: number;
		nominalV: number;
		maxV: number;
	};
	modules: { stringNo: number; position: number; serial: string }[];
	items: CommissioningItem[];
	technicianName: string;
	licenceNumber: string;
	handoverName: string | null;
	warranty: { startsOn: string; endsOn: string; years: number };
	cautions: readonly { title: string; text: string }[];
	codesNote: string;
	/** The assembler, and the company that installed the system (the site's dealer, or the assembler itself). */
	assemblerName: string;
	installerName: string;
	/** Every individual reading with the limit it was judged by. */
	readings: ReadingRow[];
	/** The photos of the system at commissioning (ids and content hashes). */
	photos: { id: number; sha256: string; caption: string | null }[];
	ruleSet: Pick<
		StoredRuleSet,
		'name' | 'market' | 'version' | 'effectiveFrom' | 'citations'
	> | null;
	signatures: { technician: Signature | null; owner: Signature | null };
	/** SHA-256 of the canonical content, fixed at issue; null for a certificate issued before hashing. */
	contentHash: string | null;
	shortCircuitA: number | null;
}

/** What a commissioning keeps beside the measurements, so its certificate never depends on later edits. */
interface Snapshot {
	serials: (string | null)[][];
	photos?: { id: number; sha256: string; caption: string | null }[];
	site?: { name: string; address: string };
	assemblerName?: string;
	installerName?: string;
	shortCircuitA?: number | null;
	internalResistanceMOhm?: number | null;
}

/**
 * A system as the commissioning checklist needs it: site, model, the module in every
 * string/position (null where none is recorded), earlier attempts, and the input of the
 * domain's evaluation. A dealer's people only reach their own organisation's sites; any
 * other system answers exactly like one that does not exist.
 */
export async function loadSystemForCommissioning(
	db: Db,
	actor: Actor,
	systemId: number,
	now = new Date()
) {
	// The one dealer-scoped lookup: another dealer's system answers like a missing one.
	const { system, site } = await findSystem(db, actor, systemId);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, system.modelId));

	const slots = await db
		.select({
			stringNo: systemSlots.stringNo,
			position: systemSlots.position,
			id: modules.id,
			serial: modules.serial,
			state: modules.state
		})
		.from(systemSlots)
		.innerJoin(modules, eq(systemSlots.moduleId, modules.id))
		.where(eq(systemSlots.systemId, systemId))
		.orderBy(asc(systemSlots.stringNo), asc(systemSlots.position));
	const strings = Array.from({ length: system.parallel }, (_, s) =>
		Array.from({ length: system.series }, (_, p) => {
			const slot = slots.find((x) => x.stringNo === s + 1 && x.position === p + 1);
			return {
				stringNo: s + 1,
				position: p + 1,
				module: slot ? { id: slot.id, serial: slot.serial, state: slot.state } : null
			};
		})
	);
	const attempts = await db
		.select({
			id: commissionings.id,
			overall: commissionings.overall,
			certificateNo: commissionings.certificateNo,
			commissionedOn: commissionings.commissionedOn,
			technicianName: commissionings.technicianName,
			createdAt: commissionings.createdAt
		})
		.from(commissionings)
		.where(eq(commissionings.systemId, systemId))
		.orderBy(desc(commissionings.id));

	const cells = system.series * model.cellsSeries;
	// The data sheet's internal resistance, else the mean of these modules' factory tests.
	let internalResistanceMOhm = model.internalResistanceMohm ?? null;
	if (internalResistanceMOhm === null && slots.length) {
		const [row] = await db
			.select({ mean: avg(factoryTests.dcirMohm) })
			.from(factoryTests)
			.where(
				inArray(
					factoryTests.moduleId,
					slots.map((x) => x.id)
				)
			);
		internalResistanceMOhm = row?.mean ? Math.round(Number(row.mean) * 1000) / 1000 : null;
	}
	const ruleSet = await ruleSetInForce(db, site.dealerOrgId, await businessDay(db, now));
	const evaluationSystem: CommissioningSystem = {
		series: system.series,
		parallel: system.parallel,
		maxContinuousA: systemCurrentLimitA({
			maxContinuousC: model.maxContinuousC,
			ratedAh: model.ratedAh,
			parallel: system.parallel,
			maxChargeA: system.maxChargeA,
			maxDischargeA: system.maxDischargeA
		}),
		model: {
			cellsSeries: model.cellsSeries,
			cellMinV: model.cellMinV,
			cellNominalV: model.cellNominalV,
			cellMaxV: model.cellMaxV,
			ratedAh: model.ratedAh,
			maxContinuousC: model.maxContinuousC,
			chargeTempMinC: model.chargeTempMinC,
			chargeTempMaxC: model.chargeTempMaxC,
			dischargeTempMinC: model.dischargeTempMinC,
			dischargeTempMaxC: model.dischargeTempMaxC,
			internalResistanceMOhm
		}
	};
	return {
		system,
		site: {
			id: site.id,
			name: site.name,
			address: site.address,
			ownerName: site.ownerName,
			ownerContact: site.ownerContact,
			dealerOrgId: site.dealerOrgId
		},
		ruleSet,
		model,
		strings,
		emptySlots: strings.flat().filter((s) => !s.module),
		voltages: {
			minV: roundMv(cells * model.cellMinV),
			nominalV: roundMv(cells * model.cellNominalV),
			maxV: roundMv(cells * model.cellMaxV)
		},
		evaluationSystem,
		attempts
	};
}

export type SystemForCommissioning = Awaited<ReturnType<typeof loadSystemForCommissioning>>;

/** The checklist evaluated as entered, without storing anything (the page's preview runs the same function). */
export function evaluateDraft(
	system: Pick<SystemForCommissioning, 'evaluationSystem' | 'ruleSet'>,
	input: MeasurementsInput
) {
	return evaluateCommissioning(system.evaluationSystem, toMeasurements(input), system.ruleSet);
}

/**
 * The certificate's canonical content: every stored field that the certificate shows,
 * serialised by RFC 8785 (JSON Canonicalization Scheme), so the same record always hashes
 * the same and any change to it changes the hash.
 */
export function canonicalContent(row: {
	certificateNo: string | null;
	commissionedOn: string;
	overall: string;
	systemId: number;
	technicianName: string;
	licenceNumber: string;
	handoverName: string | null;
	measurements: string;
	items: string;
	ruleSetId: number | null;
	ruleSetVersion: number | null;
	technicianSignature: string | null;
	ownerSignature: string | null;
}): string {
	return canonicalize({
		certificateNo: row.certificateNo,
		commissionedOn: row.commissionedOn,
		overall: row.overall,
		systemId: row.systemId,
		technicianName: row.technicianName,
		licenceNumber: row.licenceNumber,
		handoverName: row.handoverName,
		measurements: JSON.parse(row.measurements),
		items: JSON.parse(row.items),
		ruleSet: { id: row.ruleSetId, version: row.ruleSetVersion },
		signatures: {
			technician: row.technicianSignature ? JSON.parse(row.technicianSignature) : null,
			owner: row.ownerSignature ? JSON.parse(row.ownerSignature) : null
		}
	})!;
}

export const sha256Hex = (text: string) => createHash('sha256').update(text, 'utf8').digest('hex');

async function organisationName(db: Db, orgId: number | null): Promise<string> {
	const [org] = orgId
		? await db
				.select({ name: organisations.name })
				.from(organisations)
				.where(eq(organisations.id, orgId))
		: await db
				.select({ name: organisations.name })
				.from(organisations)
				.where(eq(organisations.kind, 'assembler'))
				.limit(1);
	return org?.name ?? 'the assembler';
}

/** Next certificate number of a year: PLC-{YYYY}-{NNNNN}. Call inside the write transaction. */
function nextCertificateNo(tx: Tx, year: number): Promise<string> {
	return nextYearlyReference(tx, commissionings, commissionings.certificateNo, {
		code: 'PLC',
		year,
		width: 5
	});
}

export interface SubmitResult {
	id: number;
	overall: 'pass' | 'fail' | 'incomplete';
	certificateNo: string | null;
	commissionedOn: string;
	items: CommissioningItem[];
	/** Where the certificate went; `error` when the mail server refused it (the commissioning stands). */
	mail: {
		to: string;
		sent: boolean;
		error?: string;
		/** The copy to the owner, when the owner's contact is an e-mail address. */
		owner: { to: string; sent: boolean; error?: string } | null;
	} | null;
}

/**
 * Records one commissioning attempt of a system. Refused when a slot has no module, a
 * module is not installed, or the system is already commissioned. The checklist is
 * evaluated and stored whatever the outcome, so a fail or an incomplete attempt shows
 * what to correct and can be repeated. A pass gives a certificate number, commissions the
 * system and every module, and starts each module's warranty with a snapshot of the
 * model's terms; the certificate then goes by e-mail to the site's dealer (or the
 * assembler's office for its own sites).
 */
export async function submitCommissioning(
	db: Db,
	actor: Actor,
	systemId: number,
	input: CommissioningInput,
	now = new Date()
): Promise<SubmitResult> {
	if (actor.userId === null)
		throw new InvalidInputError('A commissioning is signed by a signed-in technician.');
	const loaded = await loadSystemForCommissioning(db, actor, systemId, now);
	const { system, model, site, ruleSet } = loaded;
	const label = `${system.name} at ${site.name}`;
	if (system.status === 'commissioned') {
		const cert = loaded.attempts.find((a) => a.certificateNo);
		throw new ConflictError(
			`${label} is already commissioned${cert ? ` (certificate ${cert.certificateNo} of ${cert.commissionedOn})` : ''}; it cannot be commissioned again.`
		);
	}
	if (loaded.emptySlots.length > 0) {
		const where = loaded.emptySlots
			.map((s) => `string ${s.stringNo} position ${s.position}`)
			.join(', ');
		throw new ConflictError(
			`${label} has no module recorded at ${where}. Record every module of the system before commissioning it.`
		);
	}
	const placed = loaded.strings.flat().map((s) => ({ ...s, module: s.module! }));
	const notInstalled = placed.filter((s) => !mayMove(s.module.state, 'commission'));
	if (notInstalled.length > 0) {
		throw new ConflictError(
			`Only installed modules can be commissioned: ${notInstalled.map((s) => `${s.module.serial} is “${STATE_LABELS[s.module.state] ?? s.module.state}”`).join('; ')}.`
		);
	}

	const measurements = toMeasurements(input);
	const result = evaluateCommissioning(loaded.evaluationSystem, measurements, ruleSet);
	if (result.implausible.length > 0)
		throw new InvalidInputError(
			`The checklist was not stored: ${result.implausible.length === 1 ? 'a reading is' : 'some readings are'} implausible. ${result.implausible.join(' ')}`,
			result.implausible.map((message) => ({ path: 'readings', message }))
		);
	// The day on the assembler's calendar: a commissioning at 08:00 in UTC+10 is dated that day.
	const commissionedOn = await businessDay(db, now);
	const passed = result.overall === 'pass';
	if (passed && (!input.technicianSignature || !input.ownerSignature))
		throw new InvalidInputError(
			'Every item passed, but the certificate needs both signatures: the technician and the owner (or their representative) sign in the boxes under “Sign-off and handover”.',
			[
				...(!input.technicianSignature
					? [{ path: 'technicianSignature', message: 'The technician signs here.' }]
					: []),
				...(!input.ownerSignature
					? [{ path: 'ownerSignature', message: 'The owner or their representative signs here.' }]
					: [])
			]
		);
	const photos = await db
		.select({ id: attachments.id, sha256: attachments.sha256, caption: attachments.caption })
		.from(attachments)
		.where(and(eq(attachments.ownerKind, 'system'), eq(attachments.ownerId, systemId)))
		.orderBy(asc(attachments.id));
	const snapshot: Snapshot = {
		serials: loaded.strings.map((row) => row.map((x) => x.module?.serial ?? null)),
		photos,
		site: { name: site.name, address: site.address },
		assemblerName: await organisationName(db, null),
		installerName: await organisationName(db, site.dealerOrgId),
		shortCircuitA: result.shortCircuitA,
		internalResistanceMOhm: loaded.evaluationSystem.model.internalResistanceMOhm ?? null
	};
	const warrantyEndsOn = warrantyTermEnd(commissionedOn, model.warrantyYears);
	const terms = {
		...warrantyTermsOf(model),
		usableWh: model.usableWh,
		ratedAh: model.ratedAh
	};

	const saved = await writeTx(db, async (tx) => {
		// A second phone submitting at the same moment finds the system already commissioned here.
		const [current] = await tx
			.select({ status: systems.status })
			.from(systems)
			.where(eq(systems.id, systemId));
		if (current?.status === 'commissioned')
			throw new ConflictError(
				`${label} has just been commissioned by someone else; it cannot be commissioned again.`
			);
		const certificateNo = passed
			? await nextCertificateNo(tx, Number(commissionedOn.slice(0, 4)))
			: null;
		const content = {
			systemId,
			certificateNo,
			overall: result.overall,
			technicianName: input.technicianName,
			licenceNumber: input.licenceNumber,
			// The serial at each position is kept with the voltages measured there, and what the
			// certificate prints about the site and companies is fixed as it was on the day.
			measurements: JSON.stringify({ ...measurements, ...snapshot }),
			items: JSON.stringify(result.items),
			handoverName: input.handoverName ?? null,
			commissionedOn,
			ruleSetId: ruleSet.id,
			ruleSetVersion: ruleSet.version,
			technicianSignature: input.technicianSignature
				? JSON.stringify(input.technicianSignature)
				: null,
			ownerSignature: input.ownerSignature ? JSON.stringify(input.ownerSignature) : null
		};
		const [row] = await tx
			.insert(commissionings)
			.values({
				...content,
				technicianUserId: actor.userId!,
				contentHash: certificateNo ? sha256Hex(canonicalContent(content)) : null,
				createdAt: now
			})
			.returning({ id: commissionings.id });
		const failed = result.items
			.filter((i) => i.status !== 'pass')
			.map((i) => ({ key: i.key, status: i.status }));
		await recordAudit(tx, actor, {
			action: `commissioning.${result.overall}`,
			entity: 'system',
			entityId: systemId,
			after: {
				commissioningId: row.id,
				certificateNo,
				overall: result.overall,
				notPassed: failed,
				ruleSet: { id: ruleSet.id, market: ruleSet.market, version: ruleSet.version }
			},
			at: now
		});
		if (!passed) return { id: row.id, certificateNo };

		await tx.update(systems).set({ status: 'commissioned' }).where(eq(systems.id, systemId));
		const ids = placed.map((s) => s.module.id);
		const updated = await tx
			.update(modules)
			.set({
				state: endOf('commission'),
				commissionedAt: now,
				warrantyStartsOn: commissionedOn,
				warrantyEndsOn,
				warrantyTerms: JSON.stringify(terms),
				updatedAt: now
			})
			.where(and(inArray(modules.id, ids), inArray(modules.state, statesFrom('commission'))))
			.returning({ id: modules.id });
		if (updated.length !== ids.length)
			throw new ConflictError(
				'A module of this system changed state while it was being commissioned. Reload the page and submit again.'
			);
		for (const s of placed) {
			await recordEvent(tx, actor, {
				moduleId: s.module.id,
				kind: 'commissioned',
				summary: `Commissioned in ${label}, string ${s.stringNo} position ${s.position} (certificate ${certificateNo}); warranty ${commissionedOn} to ${warrantyEndsOn}`,
				detail: {
					certificateNo,
					commissioningId: row.id,
					systemId,
					stringNo: s.stringNo,
					position: s.position,
					warrantyStartsOn: commissionedOn,
					warrantyEndsOn,
					terms
				},
				at: now
			});
			await recordAudit(tx, actor, {
				action: 'module.commission',
				entity: 'module',
				entityId: s.module.serial,
				before: { state: 'installed' },
				after: {
					state: 'commissioned',
					certificateNo,
					warrantyStartsOn: commissionedOn,
					warrantyEndsOn,
					warrantyTerms: terms
				},
				at: now
			});
		}
		return { id: row.id, certificateNo };
	});

	const base = {
		id: saved.id,
		overall: result.overall,
		certificateNo: saved.certificateNo,
		commissionedOn,
		items: result.items
	};
	if (!saved.certificateNo) return { ...base, mail: null };
	return { ...base, mail: await mailCertificate(db, actor, saved.id) };
}

const OWNER_EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]{2,}$/;

/** The owner's e-mail address when the contact on record is one (it may be a phone number). */
function ownerEmailOf(contact: string | null | undefined): string | null {
	const c = contact?.trim() ?? '';
	return c.length <= 254 && OWNER_EMAIL.test(c) ? c : null;
}

/**
 * Sends the certificate PDF to the site's dealer (or the assembler's office for its own
 * sites), and to the owner as well when the owner's contact is an e-mail address.
 */
async function mailCertificate(
	db: Db,
	actor: Actor,
	commissioningId: number
): Promise<SubmitResult['mail']> {
	const data = await certificateData(db, actor, commissioningId);
	const [org] = data.site.dealerOrgId
		? await db
				.select({ email: organisations.contactEmail })
				.from(organisations)
				.where(eq(organisations.id, data.site.dealerOrgId))
		: await db
				.select({ email: organisations.contactEmail })
				.from(organisations)
				.where(eq(organisations.kind, 'assembler'))
				.limit(1);
	const [siteRow] = await db
		.select({ ownerContact: sites.ownerContact })
		.from(sites)
		.innerJoin(systems, eq(systems.siteId, sites.id))
		.where(eq(systems.id, data.system.id));
	const ownerTo = ownerEmailOf(siteRow?.ownerContact);
	const pdf = await certificatePdf(data, await certificateExtras(db, actor, data));
	const send = async (to: string): Promise<{ to: string; sent: boolean; error?: string }> => {
		try {
			await sendMail(db, {
				to,
				subject: `Commissioning certificate ${data.certificateNo}: ${data.system.name} at ${data.site.name}`,
				text:
					`${data.system.name} at ${data.site.name} (${data.site.address}) was commissioned on ${data.commissionedOn} by ${data.technicianName} (licence ${data.licenceNumber}) of ${data.installerName}.\n\n` +
					`${data.modules.length} modules of ${data.system.modelCode}, ${data.system.series} in series × ${data.system.parallel} in parallel. ` +
					`Warranty from ${data.warranty.startsOn} to ${data.warranty.endsOn}.\n\nThe certificate ${data.certificateNo} is attached as a PDF. ` +
					`Its QR code opens a page that shows whether it is genuine and unchanged: ${verifyUrlOf(data)}\n\n${data.codesNote}\n`,
				about: `/commissionings/${data.commissioningId}`,
				attachments: [
					{
						filename: `${data.certificateNo}.pdf`,
						content: Buffer.from(pdf),
						contentType: 'application/pdf'
					}
				]
			});
			return { to, sent: true };
		} catch (e) {
			// The commissioning is stored either way; the page says the mail failed so someone sends the PDF by hand.
			console.error(`Certificate ${data.certificateNo} could not be mailed to ${to}:`, e);
			return {
				to,
				sent: false,
				error: `The mail server refused the message (${(e as Error).message}); download the PDF and send it yourself.`
			};
		}
	};
	const dealer = org?.email
		? await send(org.email)
		: {
				to: '',
				sent: false,
				error:
					'No contact e-mail address is on record for the site’s dealer; download the PDF and send it yourself.'
			};
	return { ...dealer, owner: ownerTo ? await send(ownerTo) : null };
}

/** Where a certificate's QR code points: the public verification page with the content hash. */
export function verifyUrlOf(data: Pick<CertificateData, 'certificateNo' | 'contentHash'>): string {
	return `${configuredBaseUrl()}/verify/${encodeURIComponent(data.certificateNo)}${data.contentHash ? `?h=${data.contentHash}` : ''}`;
}

/** The photo bytes and verification address the PDF needs beside the certificate data. */
export async function certificateExtras(db: Db, actor: Actor, data: CertificateData) {
	const photos: { bytes: Uint8Array; contentType: string; caption: string | null }[] = [];
	for (const p of data.photos.slice(0, 12)) {
		try {
			const { bytes, contentType } = await readAttachment(db, actor, p.id);
			photos.push({ bytes, contentType, caption: p.caption });
		} catch (e) {
			if (!(e instanceof NotFoundError)) throw e;
		}
	}
	return { photos, verifyUrl: verifyUrlOf(data) };
}

/**
 * Everything printed on a commissioning certificate, for a passing commissioning the
 * actor may see (same scope as its system). A failed or incomplete attempt has no certificate.
 */
export async function certificateData(
	db: Db,
	actor: Actor,
	commissioningId: number
): Promise<CertificateData> {
	const notFound = new NotFoundError(`Commissioning ${commissioningId} is not in the register.`);
	if (!Number.isInteger(commissioningId) || commissioningId < 1) throw notFound;
	const [c] = await db.select().from(commissionings).where(eq(commissionings.id, commissioningId));
	if (!c) throw notFound;
	let loaded: SystemForCommissioning;
	try {
		loaded = await loadSystemForCommissioning(db, actor, c.systemId);
	} catch (e) {
		if (e instanceof NotFoundError) throw notFound;
		throw e;
	}
	if (!c.certificateNo)
		throw new NotFoundError(
			`Commissioning ${commissioningId} did not pass, so it has no certificate. Correct what failed and submit the checklist again.`
		);
	const { system, model, site, voltages } = loaded;
	// The modules, site and companies as they were at commissioning (stored with the measurements), not as they are today.
	const stored = JSON.parse(c.measurements) as CommissioningMeasurements & Partial<Snapshot>;
	const serials = stored.serials?.length
		? stored.serials
		: loaded.strings.map((row) => row.map((s) => s.module?.serial ?? null));
	const [mod] = await db
		.select({ startsOn: modules.warrantyStartsOn, endsOn: modules.warrantyEndsOn })
		.from(modules)
		.where(
			and(
				inArray(
					modules.serial,
					serials.flat().filter((x): x is string => !!x)
				),
				eq(modules.warrantyStartsOn, c.commissionedOn)
			)
		)
		.limit(1);
	const ruleSet = c.ruleSetId ? await ruleSetById(db, c.ruleSetId) : null;
	const evaluationSystem = {
		...loaded.evaluationSystem,
		model: {
			...loaded.evaluationSystem.model,
			internalResistanceMOhm:
				stored.internalResistanceMOhm !== undefined
					? stored.internalResistanceMOhm
					: loaded.evaluationSystem.model.internalResistanceMOhm
		}
	};
	return {
		commissioningId: c.id,
		certificateNo: c.certificateNo,
		commissionedOn: c.commissionedOn,
		site: {
			name: stored.site?.name ?? site.name,
			address: stored.site?.address ?? site.address,
			dealerOrgId: site.dealerOrgId
		},
		system: {
			id: system.id,
			name: system.name,
			modelCode: model.code,
			modelName: model.name,
			series: system.series,
			parallel: system.parallel,
			inverterName: system.inverterName,
			...voltages
		},
		modules: serials.flatMap((row, s) =>
			row.map((serial, p) => ({ stringNo: s + 1, position: p + 1, serial: serial ?? '-' }))
		),
		items: JSON.parse(c.items) as CommissioningItem[],
		technicianName: c.technicianName,
		licenceNumber: c.licenceNumber,
		handoverName: c.handoverName,
		warranty: {
			startsOn: mod?.startsOn ?? c.commissionedOn,
			endsOn: mod?.endsOn ?? warrantyTermEnd(c.commissionedOn, model.warrantyYears),
			years: model.warrantyYears
		},
		cautions: COMMISSIONING_CAUTIONS,
		codesNote: CODES_TAKE_PRECEDENCE,
		assemblerName: stored.assemblerName ?? (await organisationName(db, null)),
		installerName: stored.installerName ?? (await organisationName(db, site.dealerOrgId)),
		readings: readingsTable(evaluationSystem, stored, ruleSet ?? undefined),
		photos: stored.photos ?? [],
		ruleSet: ruleSet
			? {
					name: ruleSet.name,
					market: ruleSet.market,
					version: c.ruleSetVersion ?? ruleSet.version,
					effectiveFrom: ruleSet.effectiveFrom,
					citations: ruleSet.citations
				}
			: null,
		signatures: {
			technician: c.technicianSignature ? (JSON.parse(c.technicianSignature) as Signature) : null,
			owner: c.ownerSignature ? (JSON.parse(c.ownerSignature) as Signature) : null
		},
		contentHash: c.contentHash,
		shortCircuitA: stored.shortCircuitA ?? null
	};
}

export type Verification =
	| { state: 'unknown'; certificateNo: string }
	| {
			state: 'genuine' | 'altered' | 'different';
			certificateNo: string;
			commissionedOn: string;
			modelCode: string;
			series: number;
			parallel: number;
			serials: string[];
			technicianName: string;
			licenceNumber: string;
			installerName: string | null;
			ruleSet: string | null;
			storedHash: string | null;
			givenHash: string | null;
	  };

/**
 * Whether a certificate is genuine and unchanged: the hash of its canonical content,
 * recomputed from the register now, must equal the hash fixed at issue ('altered' if not),
 * and the hash printed in its QR code ('different' if that one differs: not this record's
 * certificate as issued). Public: shows what the certificate says about the modules and
 * who signed, never the owner's name or the site's address.
 */
export async function verifyCertificate(
	db: Db,
	certificateNo: string,
	givenHash: string | null
): Promise<Verification> {
	const no = certificateNo.slice(0, 40);
	const [c] = await db.select().from(commissionings).where(eq(commissionings.certificateNo, no));
	if (!c) return { state: 'unknown', certificateNo: no };
	const [row] = await db
		.select({ system: systems, model: moduleModels })
		.from(systems)
		.innerJoin(moduleModels, eq(moduleModels.id, systems.modelId))
		.where(eq(systems.id, c.systemId));
	const stored = JSON.parse(c.measurements) as Partial<Snapshot>;
	const recomputed = sha256Hex(canonicalContent(c));
	const ruleSet = c.ruleSetId ? await ruleSetById(db, c.ruleSetId) : null;
	const state =
		!c.contentHash || recomputed !== c.contentHash
			? 'altered'
			: givenHash !== null && givenHash.toLowerCase() !== c.contentHash
				? 'different'
				: 'genuine';
	return {
		state,
		certificateNo: no,
		commissionedOn: c.commissionedOn,
		modelCode: row.model.code,
		series: row.system.series,
		parallel: row.system.parallel,
		serials: (stored.serials ?? []).flat().filter((x): x is string => !!x),
		technicianName: c.technicianName,
		licenceNumber: c.licenceNumber,
		installerName: stored.installerName ?? null,
		ruleSet: ruleSet ? `${ruleSet.name}, version ${c.ruleSetVersion ?? ruleSet.version}` : null,
		storedHash: c.contentHash,
		givenHash
	};
}

// ---------------------------------------------------------------------------
// The certificate as a PDF

/** A passing commissioning's certificate as PDF bytes, with photos and the verification QR code. */
export async function certificatePdfFor(db: Db, actor: Actor, commissioningId: number) {
	const data = await certificateData(db, actor, commissioningId);
	const pdf = await certificatePdf(data, await certificateExtras(db, actor, data));
	return { pdf, certificateNo: data.certificateNo };
}

export { certificatePdf };
