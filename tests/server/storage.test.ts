/**
 * Uploads: the SDK mapping of the S3 store, and what savePhoto accepts, refuses and keeps
 * (on local disk). The store's round trip on each backend, disk and an S3-compatible bucket,
 * is one suite in storage-backends.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Db } from '$lib/server/db';
import { attachments } from '$lib/server/db/schema';
import { createS3Store, type S3Module } from '$lib/server/storage';
import {
	listAttachments,
	PHOTO_MAX_BYTES,
	readAttachment,
	savePhoto
} from '$lib/server/services/attachments';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { workshopSystem } from '../factories/sites';

const saved = { UPLOAD_DIR: process.env.UPLOAD_DIR, S3_BUCKET: process.env.S3_BUCKET };
let dir: string;
let db: Db;
let tech: Actor;
let saltmarshDealer: Actor;
let ridgelineDealer: Actor;
let systemId: number;

beforeAll(async () => {
	dir = mkdtempSync(join(tmpdir(), 'packledger-uploads-'));
	process.env.UPLOAD_DIR = dir;
	delete process.env.S3_BUCKET;
	db = await createSeededDb();
	tech = await actorFor(db, 'tech@tidewater.example');
	saltmarshDealer = await actorFor(db, 'dealer@saltmarsh.example');
	ridgelineDealer = await actorFor(db, 'dealer@ridgeline.example');
	systemId = await workshopSystem(db, {
		site: {
			name: 'Gull Rock workshop',
			ownerName: 'Odo Marram',
			ownerContact: '+00 555 0100',
			address: '2 Quay Road, Saltmarsh'
		},
		systemName: 'Workshop bank'
	});
});
afterAll(() => {
	for (const [k, v] of Object.entries(saved)) {
		if (v === undefined) delete process.env[k];
		else process.env[k] = v;
	}
});

// Smallest files with real signatures (magic bytes) of each kind.
const PNG = new Uint8Array([
	0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, 1, 2, 3
]);
const JPEG = new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, 0, 1]);
const WEBP = new Uint8Array([
	...Buffer.from('RIFF'),
	30,
	0,
	0,
	0,
	...Buffer.from('WEBPVP8 '),
	0,
	0,
	0,
	0
]);
// ISO base media file with brand 'heic' (what an iPhone writes by default).
const HEIC = new Uint8Array([
	0,
	0,
	0,
	24,
	...Buffer.from('ftypheic'),
	0,
	0,
	0,
	0,
	...Buffer.from('mif1heic')
]);
const TEXT = new TextEncoder().encode('string voltages: 101.2 V, 101.3 V\n');

describe('S3 store', () => {
	it('maps put/get/delete to the SDK commands, and a missing key to null', async () => {
		const objects = new Map<string, { Body: Uint8Array; ContentType: string }>();
		class Cmd {
			constructor(public input: Record<string, unknown>) {}
		}
		class Put extends Cmd {}
		class Get extends Cmd {}
		class Del extends Cmd {}
		const fake: S3Module = {
			S3Client: class {
				async send(c: Cmd) {
					const key = `${c.input.Bucket}/${c.input.Key}`;
					if (c instanceof Put)
						objects.set(key, {
							Body: c.input.Body as Uint8Array,
							ContentType: c.input.ContentType as string
						});
					if (c instanceof Del) objects.delete(key);
					if (c instanceof Get) {
						const o = objects.get(key);
						if (!o)
							throw Object.assign(new Error('The specified key does not exist.'), {
								name: 'NoSuchKey'
							});
						return {
							Body: { transformToByteArray: async () => o.Body },
							ContentType: o.ContentType
						};
					}
					return {};
				}
			},
			PutObjectCommand: Put,
			GetObjectCommand: Get,
			DeleteObjectCommand: Del
		};
		const store = createS3Store({ bucket: 'uploads' }, fake);
		await store.put('a/b-1', PNG, 'image/png');
		expect((await store.get('a/b-1'))?.contentType).toBe('image/png');
		await store.delete('a/b-1');
		expect(await store.get('a/b-1')).toBeNull();
		await expect(store.put('../x', PNG, 'image/png')).rejects.toThrow(/Invalid storage key/);
	});
});

describe('savePhoto', () => {
	const owner = () => ({ ownerKind: 'system' as const, ownerId: systemId });

	it('accepts a PNG renamed .jpg as a PNG, by its content', async () => {
		const row = await savePhoto(
			db,
			tech,
			owner(),
			{ name: 'IMG_2210.jpg', type: 'image/jpeg', bytes: PNG },
			'Battery rack, front'
		);
		expect(row.contentType).toBe('image/png');
		expect(row.sha256).toBe(createHash('sha256').update(PNG).digest('hex'));
		expect(row.storageKey).toMatch(/^attachments\/system\/\d+\/[0-9a-f-]+$/);
		const read = await readAttachment(db, saltmarshDealer, row.id);
		expect(read.contentType).toBe('image/png');
		expect(Array.from(read.bytes)).toEqual(Array.from(PNG));
	});

	it('accepts JPEG and WebP', async () => {
		expect(
			(await savePhoto(db, tech, owner(), { name: 'a.jpg', type: 'image/jpeg', bytes: JPEG }))
				.contentType
		).toBe('image/jpeg');
		expect(
			(await savePhoto(db, tech, owner(), { name: 'b.webp', type: 'image/webp', bytes: WEBP }))
				.contentType
		).toBe('image/webp');
	});

	it('refuses a text file that says it is image/jpeg', async () => {
		await expect(
			savePhoto(db, tech, owner(), { name: 'notes.jpg', type: 'image/jpeg', bytes: TEXT })
		).rejects.toThrow(/notes\.jpg is not a JPEG, PNG or WebP image/);
	});

	it('refuses HEIC with what to change on the phone', async () => {
		await expect(
			savePhoto(db, tech, owner(), { name: 'IMG_2211.HEIC', type: 'image/heic', bytes: HEIC })
		).rejects.toThrow(
			"IMG_2211.HEIC is a HEIC image; set the phone camera to 'Most compatible' (JPEG) or send a JPEG/PNG/WebP"
		);
		// Even when the phone calls it a JPEG.
		await expect(
			savePhoto(db, tech, owner(), { name: 'IMG_2212.jpg', type: 'image/jpeg', bytes: HEIC })
		).rejects.toThrow(/is a HEIC image/);
	});

	it('refuses more than 10 MB', async () => {
		const big = new Uint8Array(PHOTO_MAX_BYTES + 1);
		big.set(JPEG);
		await expect(
			savePhoto(db, tech, owner(), { name: 'IMG_2213.jpg', type: 'image/jpeg', bytes: big })
		).rejects.toThrow(/IMG_2213\.jpg is 10\.1 MB, over the 10 MB limit/);
	});

	it('keeps nothing from a refused photo', async () => {
		const before = (await db.select().from(attachments)).length;
		await expect(
			savePhoto(db, tech, owner(), { name: 'x.jpg', type: 'image/jpeg', bytes: TEXT })
		).rejects.toThrow();
		expect((await db.select().from(attachments)).length).toBe(before);
	});

	it("answers another dealer's photo like a missing one", async () => {
		const row = await savePhoto(db, tech, owner(), {
			name: 'c.jpg',
			type: 'image/jpeg',
			bytes: JPEG
		});
		await expect(readAttachment(db, ridgelineDealer, row.id)).rejects.toThrow(
			`Attachment ${row.id} is not in the register.`
		);
		await expect(readAttachment(db, ridgelineDealer, 999999)).rejects.toThrow(
			'Attachment 999999 is not in the register.'
		);
		await expect(listAttachments(db, ridgelineDealer, owner())).rejects.toThrow(
			/not in the register/
		);
		await expect(
			savePhoto(db, ridgelineDealer, owner(), { name: 'd.jpg', type: 'image/jpeg', bytes: JPEG })
		).rejects.toThrow(/not in the register/);
		expect((await listAttachments(db, saltmarshDealer, owner())).map((a) => a.id)).toContain(
			row.id
		);
	});
});
