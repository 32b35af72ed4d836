/**
 * Uploads on shared storage (issue 17, item 9): one suite run per storage backend — local disk
 * and an S3-compatible bucket, through the real `@aws-sdk/client-s3` against s3rver (a local
 * S3-compatible fake from npm) that this file starts and stops itself: the store's round trip
 * (put, get, delete, a missing key, refused keys), and photos and attachments through the
 * service. Database backups go to the same bucket and restore from it.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import S3rver from 's3rver';
import { ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3';
import type { Db } from '$lib/server/db';
import {
	deleteObject,
	getObject,
	openS3Store,
	putObject,
	s3ConfigFromEnv
} from '$lib/server/storage';
import { listAttachments, readAttachment, savePhoto } from '$lib/server/services/attachments';
import { backupToStore, checkDatabaseFile, restoreFromStore } from '$lib/server/db/backup';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { workshopSystem } from '../factories/sites';

const BUCKET = 'packledger-test';
const KEYS = ['UPLOAD_DIR', 'S3_BUCKET', 'S3_ENDPOINT', 'S3_REGION', 'S3_ACCESS_KEY_ID'] as const;
const ALL_KEYS = [...KEYS, 'S3_SECRET_ACCESS_KEY', 'S3_FORCE_PATH_STYLE'] as const;
const saved = Object.fromEntries(ALL_KEYS.map((k) => [k, process.env[k]]));
let fake: S3rver;
let endpoint: string;
let work: string;
let db: Db;
let tech: Actor;
let dealer: Actor;
let otherDealer: Actor;
let systemId: number;

// A real 1×1 PNG (signature, IHDR, IDAT, IEND) and the smallest JPEG header with its magic bytes.
const PNG = Buffer.from(
	'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR4nGNgYGD4DwABBAEAwS2OUAAAAABJRU5ErkJggg==',
	'base64'
);
const JPEG = new Uint8Array([0xff, 0xd8, 0xff, 0xe0, 0, 16, 0x4a, 0x46, 0x49, 0x46, 0, 1, 9, 9]);
const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

function useDisk() {
	for (const k of ALL_KEYS) delete process.env[k];
	process.env.UPLOAD_DIR = join(work, 'uploads');
}
function useS3() {
	useDisk();
	Object.assign(process.env, {
		S3_BUCKET: BUCKET,
		S3_ENDPOINT: endpoint,
		S3_REGION: 'us-east-1',
		// s3rver's documented default credentials.
		S3_ACCESS_KEY_ID: 'S3RVER',
		S3_SECRET_ACCESS_KEY: 'S3RVER',
		S3_FORCE_PATH_STYLE: 'true'
	});
}

/** What the bucket holds, listed by the SDK directly (not through the app's store). */
async function bucketKeys(): Promise<string[]> {
	const client = new S3Client({
		region: 'us-east-1',
		endpoint,
		forcePathStyle: true,
		credentials: { accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER' }
	});
	const out = await client.send(new ListObjectsV2Command({ Bucket: BUCKET }));
	return (out.Contents ?? []).map((o) => o.Key!);
}

beforeAll(async () => {
	work = mkdtempSync(join(tmpdir(), 'packledger-s3-'));
	fake = new S3rver({
		port: 0,
		address: '127.0.0.1',
		silent: true,
		directory: join(work, 's3rver'),
		configureBuckets: [{ name: BUCKET, configs: [] }]
	});
	const addr = await fake.run();
	endpoint = `http://127.0.0.1:${addr.port}`;
	db = await createSeededDb();
	tech = await actorFor(db, 'tech@tidewater.example');
	dealer = await actorFor(db, 'dealer@saltmarsh.example');
	otherDealer = await actorFor(db, 'dealer@ridgeline.example');
	systemId = await workshopSystem(db, {
		site: {
			name: 'Heron Point boathouse',
			ownerName: 'Wren Tallis',
			ownerContact: '+00 555 0142',
			address: '9 Slipway Lane, Port Halden'
		},
		systemName: 'Boathouse bank'
	});
}, 60_000);

afterAll(async () => {
	await fake?.close();
	for (const [k, v] of Object.entries(saved)) {
		if (v === undefined) delete process.env[k];
		else process.env[k] = v;
	}
	rmSync(work, { recursive: true, force: true });
});

describe.each([
	['local disk', useDisk],
	['an S3-compatible bucket (s3rver)', useS3]
])('uploads on %s', (where, use) => {
	const owner = () => ({ ownerKind: 'system' as const, ownerId: systemId });
	const onS3 = where.startsWith('an S3');

	it('puts, gets and deletes an object; a missing key is null', async () => {
		use();
		const key = `test/round-trip-${onS3 ? 's3' : 'disk'}`;
		await putObject(key, JPEG, 'image/jpeg');
		const got = await getObject(key);
		expect(got?.contentType).toBe('image/jpeg');
		expect(Array.from(got!.bytes)).toEqual(Array.from(JPEG));
		// Where it went: in the bucket with S3, under UPLOAD_DIR on disk, never both.
		expect((await bucketKeys()).includes(key)).toBe(onS3);
		expect(existsSync(join(work, 'uploads', key))).toBe(!onS3);
		await deleteObject(key);
		expect(await getObject(key)).toBeNull();
		expect(await bucketKeys()).not.toContain(key);
		expect(existsSync(join(work, 'uploads', key))).toBe(false);
		expect(await getObject('test/never-stored')).toBeNull();
		await deleteObject('test/never-stored');
	});

	it('refuses keys that are not generated keys, before the store is asked', async () => {
		use();
		const before = await bucketKeys();
		for (const key of [
			'../etc/passwd',
			'a/../../b',
			'/abs/path',
			'Upper/Case',
			'with.dot',
			'a//b',
			'trailing/',
			'',
			'a b'
		]) {
			await expect(putObject(key, JPEG, 'image/jpeg'), key).rejects.toThrow(/Invalid storage key/);
			await expect(getObject(key), key).rejects.toThrow(/Invalid storage key/);
			await expect(deleteObject(key), key).rejects.toThrow(/Invalid storage key/);
		}
		expect(await bucketKeys()).toEqual(before);
	});

	it('stores a photo, reads the same bytes back for its dealer, and refuses another dealer', async () => {
		use();
		const row = await savePhoto(
			db,
			tech,
			owner(),
			{ name: 'rack.png', type: 'image/png', bytes: new Uint8Array(PNG) },
			'Rack, front'
		);
		expect(row.contentType).toBe('image/png');
		expect(row.sha256).toBe(sha(PNG));
		const read = await readAttachment(db, dealer, row.id);
		expect(read.contentType).toBe('image/png');
		expect(sha(read.bytes)).toBe(sha(PNG));
		await expect(readAttachment(db, otherDealer, row.id)).rejects.toThrow(/not in the register/);
		expect((await listAttachments(db, dealer, owner())).map((a) => a.id)).toContain(row.id);

		// Where it went: in the bucket with S3, under UPLOAD_DIR on disk, never both.
		expect((await bucketKeys()).includes(row.storageKey)).toBe(onS3);
		expect(existsSync(join(work, 'uploads', row.storageKey))).toBe(!onS3);
	});

	it('keeps a JPEG as a JPEG and a refused file out of the store', async () => {
		use();
		const before = (await bucketKeys()).length;
		const disk = () =>
			existsSync(join(work, 'uploads'))
				? readdirSync(join(work, 'uploads'), { recursive: true }).length
				: 0;
		const diskBefore = disk();
		await expect(
			savePhoto(db, tech, owner(), {
				name: 'notes.jpg',
				type: 'image/jpeg',
				bytes: new TextEncoder().encode('not a photo')
			})
		).rejects.toThrow(/is not a JPEG, PNG or WebP image/);
		expect((await bucketKeys()).length).toBe(before);
		expect(disk()).toBe(diskBefore);
		const row = await savePhoto(db, tech, owner(), {
			name: 'a.jpg',
			type: 'image/jpeg',
			bytes: JPEG
		});
		expect((await readAttachment(db, tech, row.id)).contentType).toBe('image/jpeg');
	});
});

describe('backups in the bucket', () => {
	it('db:backup to s3: uploads a checked copy; db:restore from it gives the same rows', async () => {
		useS3();
		const config = s3ConfigFromEnv()!;
		const store = await openS3Store(config);
		const key = `backups/packledger-${Date.now()}`;
		const r = await backupToStore(db, key, store);
		expect(r.integrity).toBe('ok');
		expect(await bucketKeys()).toContain(key);
		await expect(backupToStore(db, key, store)).rejects.toThrow(/already in the bucket/);
		const target = join(work, 'restored.db');
		const restored = await restoreFromStore(key, store, `file:${target}`);
		// Check values from SQLite itself: integrity_check says "ok", and the row counts of every
		// table equal those SQLite counts in the backup taken (r.tables).
		expect(restored.integrity).toBe('ok');
		expect(restored.tables).toEqual(r.tables);
		expect((await checkDatabaseFile(target)).tables.users).toBeGreaterThan(0);
		await expect(restoreFromStore('backups/none-such', store, `file:${target}`)).rejects.toThrow(
			/no backup backups\/none-such/
		);
	}, 60_000);
});
