import { createHash } from 'node:crypto';
import { gunzipSync } from 'node:zlib';
import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { importFiles, importPlanChunks } from '$lib/server/db/schema';
import { readUploadedText } from '$lib/server/upload';
import { previewImport } from '$lib/server/services/imports';
import { planWriter } from '$lib/server/services/import-plans';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';

const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
const NOW = new Date('2026-11-25T00:00:00Z');
const upload = (bytes: Uint8Array<ArrayBuffer>) =>
	readUploadedText(
		new Request('http://127.0.0.1/api/imports/factory-tests', {
			method: 'POST',
			headers: { 'content-type': 'text/csv' },
			body: bytes
		}),
		new URL('http://127.0.0.1/api/imports/factory-tests?name=rig.csv'),
		1 << 20
	);

let db: Db;
let workshop: Actor;
let serials: string[];
beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	serials = await makeModules(db, workshop, { count: 2, built: 2 });
});

describe('the uploaded bytes', () => {
	it('are kept only when they are exactly the text’s UTF-8', async () => {
		// Valid UTF-8 ("°C" is C2 B0 43, Unicode 15 table 3-7): the bytes are the text's.
		const valid = new Uint8Array([0x61, 0x2c, 0xc2, 0xb0, 0x43, 0x0d, 0x0a]);
		const a = await upload(valid);
		expect(a.content).toBe('a,°C\r\n');
		expect([...(a.data ?? [])]).toEqual([...valid]);
		expect(a.bytes).toBe(7);

		// A byte-order mark is dropped by the decoder (WHATWG Encoding Standard, "UTF-8 decode"):
		// the text is not the bytes, so no bytes are handed on.
		const bom = await upload(new Uint8Array([0xef, 0xbb, 0xbf, 0x61, 0x0a]));
		expect(bom.content).toBe('a\n');
		expect(bom.data).toBeUndefined();

		// F0 9F 98 is a truncated 4-byte sequence: one U+FFFD (EF BF BD) replaces it (Unicode 15
		// §3.9, "U+FFFD Substitution of Maximal Subparts"), so the text's UTF-8 has the same
		// length (3 + 1 bytes) but other bytes.
		const cut = await upload(new Uint8Array([0xf0, 0x9f, 0x98, 0x41]));
		expect(cut.content).toBe('\uFFFDA');
		expect(Buffer.byteLength(cut.content, 'utf8')).toBe(4);
		expect(cut.data).toBeUndefined();
	});

	it('are stored as the file and hashed as the text would be', async () => {
		const text =
			[
				HEADER,
				`${serials[0]},2026-11-20T00:00:00Z,46.8,2390,5.1,51.2,8,500,22.5,RIG-2,T.Vale`
			].join('\r\n') + '\r\n';
		const file = await upload(new TextEncoder().encode(text));
		expect(file.data).toBeDefined();
		const p = await previewImport(db, workshop, file, NOW);
		expect(p.import).toMatchObject({ accepted: 1, rejected: 0 });
		// The digest of the bytes is the one of the text (node:crypto over the text's UTF-8).
		expect(p.import.sha256).toBe(createHash('sha256').update(text, 'utf8').digest('hex'));
		const [stored] = await db
			.select()
			.from(importFiles)
			.where(eq(importFiles.importId, p.import.id));
		// Kept gzip-compressed: Node's zlib (an implementation of RFC 1952 apart from the code
		// that wrote it) gives the text back, byte for byte.
		expect(stored.content).toBe('');
		expect(gunzipSync(stored.contentGzip!).toString('utf8')).toBe(text);
		// The same text again (sent without its bytes) is found by the same digest.
		const again = await previewImport(
			db,
			workshop,
			{ name: 'rig.csv', content: text, bytes: file.bytes },
			NOW
		);
		expect(again).toMatchObject({ alreadySent: true, import: { id: p.import.id } });
	});
});

/** A body sent as a stream of `parts` chunks of `size` bytes, without a declared length. */
function streamed(parts: number, size: number, byte = 0x61) {
	let sent = 0;
	const body = new ReadableStream<Uint8Array>({
		pull(c) {
			if (sent++ === parts) c.close();
			else c.enqueue(new Uint8Array(size).fill(byte));
		}
	});
	return new Request('http://127.0.0.1/api/imports/factory-tests', {
		method: 'POST',
		headers: { 'content-type': 'text/csv' },
		body,
		duplex: 'half'
	} as RequestInit);
}

describe('the body as it is read', () => {
	const url = new URL('http://127.0.0.1/api/imports/factory-tests?name=rig.csv');
	it('is read whole without a declared length, past the first buffer', async () => {
		// 40 chunks of 10,000 bytes: 400,000 bytes, more than six times the first 64 KB buffer.
		const file = await readUploadedText(streamed(40, 10_000), url, 1 << 20);
		expect(file.bytes).toBe(400_000);
		expect(file.content).toBe('a'.repeat(400_000));
		expect(file.data?.byteLength).toBe(400_000);
	});

	it('is read exactly at the limit, and refused one byte over it', async () => {
		const limit = 4 * 10_000;
		await expect(readUploadedText(streamed(4, 10_000), url, limit)).resolves.toMatchObject({
			bytes: limit
		});
		await expect(readUploadedText(streamed(5, 10_000), url, limit + 9_999)).rejects.toMatchObject({
			status: 413
		});
	});

	it('of a declared length fills a buffer of that length, and is the bytes sent', async () => {
		const exact = new TextEncoder().encode('a,b\r\n');
		const file = await readUploadedText(
			new Request('http://127.0.0.1/', {
				method: 'POST',
				headers: { 'content-type': 'text/csv', 'content-length': String(exact.byteLength) },
				body: exact
			}),
			url,
			1 << 20
		);
		expect(file).toMatchObject({ content: 'a,b\r\n', bytes: 5 });
		expect([...file.data!]).toEqual([...exact]);
	});
});

describe('the plan writer', () => {
	it('asks the reader to wait once its writes fall behind, and loses no slice', async () => {
		const key = `test-${Date.now()}`;
		const plan = planWriter(db, key, NOW);
		const slice = (seq: number) => ({ seq, rows: '[]', states: '[]' });
		// The write lock held elsewhere: no write can finish.
		let release!: () => void;
		const held = withWriteLock(db, () => new Promise<void>((r) => (release = r)));
		const answers: (Promise<void> | undefined)[] = [];
		for (let seq = 0; seq < 24; seq++) answers.push(plan.write(slice(seq)));
		// Writes go 8 slices at a time (SLICES_PER_WRITE): the first write alone in flight asks
		// nothing; the second and third ask the reader to wait.
		expect(answers.map((a) => a !== undefined)).toEqual(
			Array.from({ length: 24 }, (_, i) => i === 15 || i === 23)
		);
		let waited = false;
		const wait = answers[15]!.then(() => (waited = true));
		await new Promise((r) => setTimeout(r, 50));
		expect(waited).toBe(false);
		release();
		await held;
		await wait;
		expect(await plan.rest()).toEqual([]);
		const rows = await db
			.select({ seq: importPlanChunks.seq })
			.from(importPlanChunks)
			.where(eq(importPlanChunks.planKey, key));
		expect(rows.map((r) => r.seq).sort((a, b) => a - b)).toEqual(
			Array.from({ length: 24 }, (_, i) => i)
		);
		await plan.discard();
	});
});
