import { createHash, randomUUID } from 'node:crypto';
import { and, asc, eq } from 'drizzle-orm';
import { writeTx, type TxHook, type Db } from '$lib/server/db';
import { attachments, commissionings, sites, systems, claims } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { InvalidInputError, NotFoundError } from '$lib/server/errors';
import { deleteObject, getObject, putObject } from '$lib/server/storage';
import { recordAudit } from './audit';

/** Largest photo accepted: 10 MB, enough for a full-resolution phone photo. */
export const PHOTO_MAX_BYTES = 10 * 1024 * 1024;

export type AttachmentOwnerKind = 'system' | 'commissioning' | 'claim';
export interface AttachmentOwner {
	ownerKind: AttachmentOwnerKind;
	ownerId: number;
}

export type PhotoType = 'image/jpeg' | 'image/png' | 'image/webp';

const ascii = (b: Uint8Array, from: number, length: number) =>
	String.fromCharCode(...b.subarray(from, from + length));
const startsWith = (b: Uint8Array, sig: number[]) => sig.every((v, i) => b[i] === v);

// ISO base media brands of HEIF/HEIC (still images from phones) and AVIF.
const HEIF_BRANDS = new Set([
	'heic',
	'heix',
	'hevc',
	'hevx',
	'heim',
	'heis',
	'hevm',
	'hevs',
	'mif1',
	'msf1'
]);

/**
 * What the file's first bytes say it is (its "magic bytes"), whatever its name or
 * declared type claims: one of the accepted photo types, a known other kind, or null.
 */
export function sniffImage(bytes: Uint8Array): { accepted: PhotoType } | { other: string } | null {
	if (startsWith(bytes, [0xff, 0xd8, 0xff])) return { accepted: 'image/jpeg' };
	if (startsWith(bytes, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]))
		return { accepted: 'image/png' };
	if (bytes.length >= 12 && ascii(bytes, 0, 4) === 'RIFF' && ascii(bytes, 8, 4) === 'WEBP')
		return { accepted: 'image/webp' };
	if (bytes.length >= 12 && ascii(bytes, 4, 4) === 'ftyp') {
		const brand = ascii(bytes, 8, 4);
		if (HEIF_BRANDS.has(brand)) return { other: 'HEIC' };
		if (brand === 'avif' || brand === 'avis') return { other: 'AVIF' };
		return { other: 'video or ISO media' };
	}
	if (ascii(bytes, 0, 4) === 'GIF8') return { other: 'GIF' };
	if (ascii(bytes, 0, 5) === '%PDF-') return { other: 'PDF' };
	if (ascii(bytes, 0, 2) === 'BM') return { other: 'BMP' };
	if (startsWith(bytes, [0x49, 0x49, 0x2a, 0x00]) || startsWith(bytes, [0x4d, 0x4d, 0x00, 0x2a]))
		return { other: 'TIFF' };
	return null;
}

// Rounded up, so a file just over the limit never reads as exactly the limit.
const mb = (n: number) => `${(Math.ceil((n / 1024 / 1024) * 10) / 10).toFixed(1)} MB`;
const SEND = 'send a JPEG, PNG or WebP photo';

/** Checks a photo's size and content; returns its real type or throws a message a technician can act on. */
export function checkPhoto(file: { name: string; type: string; bytes: Uint8Array }): PhotoType {
	const name = file.name || 'The photo';
	if (file.bytes.byteLength === 0)
		throw new InvalidInputError(`${name} is empty; take the photo again.`);
	if (file.bytes.byteLength > PHOTO_MAX_BYTES) {
		throw new InvalidInputError(
			`${name} is ${mb(file.bytes.byteLength)}, over the ${PHOTO_MAX_BYTES / 1024 / 1024} MB limit. Choose a smaller photo size in the camera settings, or ${SEND} of at most ${PHOTO_MAX_BYTES / 1024 / 1024} MB.`
		);
	}
	const kind = sniffImage(file.bytes);
	if (kind && 'accepted' in kind) return kind.accepted;
	if (kind?.other === 'HEIC') {
		throw new InvalidInputError(
			`${name} is a HEIC image; set the phone camera to 'Most compatible' (JPEG) or send a JPEG/PNG/WebP.`
		);
	}
	if (kind)
		throw new InvalidInputError(
			`${name} is a ${kind.other} file, not a photo Packledger keeps; ${SEND}.`
		);
	const claimed = file.type ? `, although it is labelled ${file.type}` : '';
	throw new InvalidInputError(`${name} is not a JPEG, PNG or WebP image${claimed}; ${SEND}.`);
}

const EXTENSION: Record<string, string> = {
	'image/jpeg': 'jpg',
	'image/png': 'png',
	'image/webp': 'webp'
};

/**
 * The name a file is kept and served under: the sender's name without its extension(s),
 * letters, digits, `-` and `_` only, then the extension of the type detected from the
 * content. "poly.html" that is really a JPEG becomes "poly.jpg", so no saved copy opens as
 * a page (OWASP File Upload Cheat Sheet: "Filename sanitization", "Extension validation").
 */
export function safeFileName(name: string | null | undefined, contentType: string): string {
	const base = (name ?? '').slice(0, 200).split(/[/\\]/).pop() ?? '';
	const stem = base
		.split('.')[0]
		.replace(/[^A-Za-z0-9_-]+/g, '_')
		.replace(/^_+|_+$/g, '');
	return `${stem.slice(0, 80) || 'photo'}.${EXTENSION[contentType] ?? 'bin'}`;
}

/** The dealer organisation responsible for an owner record (null: the assembler's own site), or NotFound. */
async function ownerSite(
	db: Db,
	owner: AttachmentOwner
): Promise<{ systemId: number | null; dealerOrgId: number | null }> {
	let systemId = owner.ownerId;
	if (owner.ownerKind === 'commissioning') {
		const [c] = await db
			.select({ systemId: commissionings.systemId })
			.from(commissionings)
			.where(eq(commissionings.id, owner.ownerId));
		if (!c) throw new NotFoundError();
		systemId = c.systemId;
	} else if (owner.ownerKind === 'claim') {
		// A claim belongs to its dealer (a claim on delivery has no system).
		const [c] = await db
			.select({ systemId: claims.systemId, dealerOrgId: claims.dealerOrgId })
			.from(claims)
			.where(eq(claims.id, owner.ownerId));
		if (!c) throw new NotFoundError();
		return c;
	} else if (owner.ownerKind !== 'system') {
		throw new NotFoundError();
	}
	const [row] = await db
		.select({ dealerOrgId: sites.dealerOrgId })
		.from(systems)
		.innerJoin(sites, eq(systems.siteId, sites.id))
		.where(eq(systems.id, systemId));
	if (!row) throw new NotFoundError();
	return { systemId, dealerOrgId: row.dealerOrgId };
}

/** Throws NotFound unless the actor may see the owner: its site's dealer, or the assembler's staff. */
async function assertOwnerVisible(db: Db, actor: Actor, owner: AttachmentOwner): Promise<void> {
	const what =
		owner.ownerKind === 'commissioning'
			? 'Commissioning'
			: owner.ownerKind === 'claim'
				? 'Claim'
				: 'System';
	const notFound = () => new NotFoundError(`${what} ${owner.ownerId} is not in the register.`);
	let site;
	try {
		site = await ownerSite(db, owner);
	} catch (e) {
		if (e instanceof NotFoundError) throw notFound();
		throw e;
	}
	const scope = dealerScopeOf(actor);
	if (scope !== null && site.dealerOrgId !== scope) throw notFound();
}

/**
 * Stores a photo for a system or commissioning: only real JPEG, PNG or WebP content
 * (checked by its first bytes), at most 10 MB. The file goes to storage under a generated
 * key, then an attachments row with its SHA-256 and an audit entry are written.
 */
export async function savePhoto(
	db: Db,
	actor: Actor,
	owner: AttachmentOwner,
	file: { name: string; type: string; bytes: Uint8Array },
	caption?: string | null,
	now = new Date(),
	/** Run inside this use case's own write transaction (the sync endpoint records its operation so). */
	hook?: TxHook
) {
	if (actor.userId === null)
		throw new InvalidInputError('Photos are uploaded by a signed-in person.');
	const uploadedBy = actor.userId;
	await assertOwnerVisible(db, actor, owner);
	const contentType = checkPhoto(file);
	const sha256 = createHash('sha256').update(file.bytes).digest('hex');
	const storageKey = `attachments/${owner.ownerKind}/${owner.ownerId}/${randomUUID()}`;
	const fileName = safeFileName(file.name, contentType);
	await putObject(storageKey, file.bytes, contentType);
	try {
		return await writeTx(
			db,
			async (tx) => {
				const [row] = await tx
					.insert(attachments)
					.values({
						ownerKind: owner.ownerKind,
						ownerId: owner.ownerId,
						storageKey,
						fileName,
						contentType,
						bytes: file.bytes.byteLength,
						sha256,
						caption: caption?.trim() || null,
						uploadedBy,
						createdAt: now
					})
					.returning();
				await recordAudit(tx, actor, {
					action: 'attachment.add',
					entity: 'attachment',
					entityId: row.id,
					after: {
						ownerKind: row.ownerKind,
						ownerId: row.ownerId,
						fileName,
						contentType,
						bytes: row.bytes,
						sha256
					},
					at: now
				});
				return row;
			},
			hook
		);
	} catch (e) {
		// No row points at the stored file: remove it rather than leave an orphan.
		await deleteObject(storageKey).catch(() => undefined);
		throw e;
	}
}

/** The attachments of a record, oldest first, if the actor may see the record. */
export async function listAttachments(db: Db, actor: Actor, owner: AttachmentOwner) {
	await assertOwnerVisible(db, actor, owner);
	return db
		.select({
			id: attachments.id,
			fileName: attachments.fileName,
			contentType: attachments.contentType,
			bytes: attachments.bytes,
			caption: attachments.caption,
			createdAt: attachments.createdAt
		})
		.from(attachments)
		.where(and(eq(attachments.ownerKind, owner.ownerKind), eq(attachments.ownerId, owner.ownerId)))
		.orderBy(asc(attachments.id));
}

/** One attachment with its bytes, visible with the same scope as its owner; otherwise NotFound. */
export async function readAttachment(db: Db, actor: Actor, id: number) {
	const notFound = new NotFoundError(`Attachment ${id} is not in the register.`);
	if (!Number.isInteger(id) || id < 1) throw notFound;
	const [row] = await db.select().from(attachments).where(eq(attachments.id, id));
	if (!row) throw notFound;
	try {
		await assertOwnerVisible(db, actor, {
			ownerKind: row.ownerKind as AttachmentOwnerKind,
			ownerId: row.ownerId
		});
	} catch (e) {
		if (e instanceof NotFoundError) throw notFound;
		throw e;
	}
	const object = await getObject(row.storageKey);
	if (!object)
		throw new NotFoundError(
			`The file of attachment ${id} (${row.fileName}) is missing from storage; tell an administrator.`
		);
	// Served as what the bytes are, not as what the row (or the sender) says.
	const kind = sniffImage(object.bytes);
	const contentType = kind && 'accepted' in kind ? kind.accepted : 'application/octet-stream';
	return { attachment: row, bytes: object.bytes, contentType };
}
