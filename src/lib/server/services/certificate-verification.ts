/**
 * A certificate's canonical content and SHA-256 (fixed at issue), and the public check behind
 * its QR code that the record is genuine and unchanged.
 */
import { eq } from 'drizzle-orm';
import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import type { Db } from '$lib/server/db';
import { commissionings, moduleModels, systems } from '$lib/server/db/schema';
import { ruleSetById } from './rule-sets';
import type { Snapshot } from './certificates';

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
