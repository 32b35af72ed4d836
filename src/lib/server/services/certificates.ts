/**
 * A commissioning's certificate once it is issued: what it prints (fixed at commissioning) and
 * the PDF of it. Its hash and public verification are in certificate-verification.ts, the mail
 * to the dealer and the owner in certificate-mail.ts, the PDF layout in certificate-pdf.ts.
 */
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { commissionings, modules, organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
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

/** A passing commissioning's certificate as PDF bytes, with photos and the verification QR code. */
export async function certificatePdfFor(db: Db, actor: Actor, commissioningId: number) {
	const data = await certificateData(db, actor, commissioningId);
	const pdf = await certificatePdf(data, await certificateExtras(db, actor, data));
	return { pdf, certificateNo: data.certificateNo };
}
