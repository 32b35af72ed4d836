/**
 * A commissioning's certificate once it is issued: what it prints (fixed at commissioning),
 * its canonical content and SHA-256, the public verification behind its QR code, the PDF
 * and the mail to the dealer and the owner.
 */
import { and, eq, inArray } from 'drizzle-orm';
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import type { Db } from '$lib/server/db';
import {
	commissionings,
	moduleModels,
	modules,
	organisations,
	sites,
	systems
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import { sendMail } from '$lib/server/mail';
import { configuredBaseUrl } from '$lib/server/base-url';
import {
	readingsTable,
	type CommissioningItem,
	type CommissioningMeasurements,
	type ReadingRow
} from '$lib/domain/commissioning';
import type { Signature } from '$lib/schemas/signature';
import { warrantyTermEnd } from '$lib/domain/warranty';
import { CODES_TAKE_PRECEDENCE, COMMISSIONING_CAUTIONS } from '$lib/schemas/commissioning';
import { certificatePdf } from './certificate-pdf';
import { readAttachment } from './attachments';
import { ruleSetById, type StoredRuleSet } from './rule-sets';
import { loadSystemForCommissioning, type SystemForCommissioning } from './commissioning';

/** Where a certificate's mail went; `error` when the mail server refused it (the commissioning stands). */
export interface CertificateMail {
	to: string;
	sent: boolean;
	error?: string;
	/** The copy to the owner, when the owner's contact is an e-mail address. */
	owner: { to: string; sent: boolean; error?: string } | null;
}

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
	/** The module's DC internal resistance the fault current was computed from, mΩ. */
	internalResistanceMOhm: number | null;
}

/** What a commissioning keeps beside the measurements, so its certificate never depends on later edits. */
export interface Snapshot {
	serials: (string | null)[][];
	photos?: { id: number; sha256: string; caption: string | null }[];
	site?: { name: string; address: string };
	assemblerName?: string;
	installerName?: string;
	shortCircuitA?: number | null;
	internalResistanceMOhm?: number | null;
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

export async function organisationName(db: Db, orgId: number | null): Promise<string> {
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
export async function mailCertificate(
	db: Db,
	actor: Actor,
	commissioningId: number
): Promise<CertificateMail> {
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
	// The dealer's copy ends with the address of the record; the owner has no account, so theirs
	// points to the public verification page only.
	const send = async (
		to: string,
		about?: string
	): Promise<{ to: string; sent: boolean; error?: string }> => {
		try {
			await sendMail(db, {
				to,
				subject: `Commissioning certificate ${data.certificateNo}: ${data.system.name} at ${data.site.name}`,
				text:
					`${data.system.name} at ${data.site.name} (${data.site.address}) was commissioned on ${data.commissionedOn} by ${data.technicianName} (licence ${data.licenceNumber}) of ${data.installerName}.\n\n` +
					`${data.modules.length} modules of ${data.system.modelCode}, ${data.system.series} in series × ${data.system.parallel} in parallel. ` +
					`Warranty from ${data.warranty.startsOn} to ${data.warranty.endsOn}.\n\nThe certificate ${data.certificateNo} is attached as a PDF. ` +
					`Its QR code opens a page that shows whether it is genuine and unchanged: ${verifyUrlOf(data)}\n\n${data.codesNote}\n`,
				about,
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
		? await send(org.email, `/commissionings/${commissioningId}`)
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
		shortCircuitA: stored.shortCircuitA ?? null,
		internalResistanceMOhm: evaluationSystem.model.internalResistanceMOhm ?? null
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
