import { createHash, randomUUID } from 'node:crypto';
import { promisify } from 'node:util';
import { gzip } from 'node:zlib';
import { and, eq } from 'drizzle-orm';
import type { InStatement } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { imports } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { analyseFactoryFile } from './import-analysis';
import { claimPlanStatement, dropOrphansStatement, planWriter } from './import-plans';
import { summary, type ImportResult } from './import-summary';
import { storePlanUnit } from './import-commit';
import { importWriter } from './import-writer';

/**
 * The stored file's bytes: `data` when the caller has the text's exact UTF-8 bytes (as
 * `readUploadedText` gives them), else the text encoded.
 */
const fileBytes = (file: { content: string; data?: Uint8Array }): Uint8Array =>
	file.data ?? Buffer.from(file.content, 'utf8');

const gzipAsync = promisify(gzip);

/**
 * The stored file, gzip-compressed (RFC 1952) at level 1 on a libuv thread while the rows are
 * judged: 8.5 MB of rig rows come to ~1.3 MB in ~50 ms. Stored as it came, SQLite copies a
 * value three or four times on its way in (the binding, the bound parameter, the record, the
 * pages), which put ~30 MB on the server's peak memory at the preview's last write (measured,
 * issue 17). In a buffer of its own: a small one from Node's pool must not be transferred.
 */
const compressFile = async (bytes: Uint8Array): Promise<Uint8Array> =>
	new Uint8Array(await gzipAsync(bytes, { level: 1 }));

/** Characters hashed between two turns of the event loop. */
const HASH_SLICE = 1 << 20;

/**
 * SHA-256 of the text as UTF-8, a slice at a time with the event loop let through between
 * slices; a slice never ends between the two halves of a surrogate pair, so the digest is
 * the one of the whole text at once.
 */
export async function sha256Text(text: string): Promise<string> {
	const hash = createHash('sha256');
	for (let i = 0; i < text.length;) {
		let end = Math.min(text.length, i + HASH_SLICE);
		const c = text.charCodeAt(end - 1);
		if (end < text.length && c >= 0xd800 && c <= 0xdbff) end++;
		hash.update(text.slice(i, end));
		i = end;
		if (i < text.length) await new Promise<void>((r) => setImmediate(r));
	}
	return hash.digest('hex');
}

/** SHA-256 of bytes, a slice at a time with the event loop let through between slices. */
async function sha256Bytes(data: Uint8Array): Promise<string> {
	const hash = createHash('sha256');
	for (let i = 0; i < data.byteLength; i += HASH_SLICE) {
		hash.update(data.subarray(i, i + HASH_SLICE));
		if (i + HASH_SLICE < data.byteLength) await new Promise<void>((r) => setImmediate(r));
	}
	return hash.digest('hex');
}

/**
 * Step one: validates a rig file and keeps it with its counts and its commit plan (the
 * accepted rows as insert-ready JSON slices, in the database, so any app server can commit
 * it), storing no results. A file already sent (same SHA-256) returns the earlier import.
 * The file is read a slice at a time and plan slices are written as they are made, so the
 * event loop is never held for long and the whole plan is never in memory at once. With
 * `commit`, a file whose plan is still all in hand (up to 8,000 accepted rows) is also stored,
 * in the same transaction (`committed` says so); a larger one is left for `commitImport`.
 * `file.data` is taken over (cleared once its compression has started).
 */
export async function previewImport(
	db: Db,
	actor: Actor,
	file: { name: string; content: string; bytes: number; data?: Uint8Array },
	now = new Date(),
	options: { commit?: boolean } = {}
): Promise<ImportResult & { committed?: boolean }> {
	// The text's UTF-8 bytes, so the same digest either way.
	const sha256 = file.data ? await sha256Bytes(file.data) : await sha256Text(file.content);
	const [earlier] = await db
		.select()
		.from(imports)
		.where(and(eq(imports.kind, 'factory_tests'), eq(imports.sha256, sha256)));
	if (earlier) return summary(earlier, { alreadySent: true });

	const stored = compressFile(fileBytes(file));
	// Awaited for the last write; a refused file never needs it.
	stored.catch(() => {});
	// The bytes are handed over: once compressed nothing needs them, so they may go while the
	// rows are judged (8.5 MB for 100,000 rows) rather than stay with the caller's object.
	file.data = undefined;
	const planKey = randomUUID();
	const plan = planWriter(db, planKey, now);
	let id: number;
	let preview;
	let committed = false;
	try {
		const a = await analyseFactoryFile(db, file.content, now, (chunk) => plan.write(chunk));
		preview = a.preview;
		const rest = await plan.rest();
		const rejected = new Set(a.errors.map((e) => e.row)).size;
		const statements: InStatement[] = [
			{
				sql: `INSERT INTO imports (kind, sha256, file_name, bytes, uploaded_by, token_id, uploader_label, created_at, status, rows_total, accepted, rejected, duplicates, passed, failed, errors)
				      VALUES ('factory_tests', ?, ?, ?, ?, ?, ?, ?, 'previewed', ?, ?, ?, ?, ?, ?, ?)`,
				args: [
					sha256,
					file.name.slice(0, 200),
					file.bytes,
					actor.userId,
					actor.tokenId ?? null,
					actor.label,
					now.getTime(),
					a.rowsTotal,
					a.accepted,
					rejected,
					a.duplicates.length,
					a.passed,
					a.accepted - a.passed,
					JSON.stringify(a.errors)
				]
			},
			{
				// Compressed (moved to the writer's thread, not copied); `content` is then ''.
				sql: "INSERT INTO import_files (import_id, content, content_gzip) VALUES (last_insert_rowid(), '', ?)",
				args: [await stored]
			},
			...rest,
			claimPlanStatement(planKey, sha256),
			dropOrphansStatement(now)
		];
		// A small file sent with ?commit=accepted (its whole plan still in hand) is previewed and
		// stored in one transaction: one sync, and one message to the writer (the import's id
		// and its slices' ids are references to the rows the unit inserts).
		const storeNow = options.commit === true && rest.length === a.chunks;
		id = await withWriteLock(db, async () => {
			const writer = await importWriter(db);
			if (!storeNow) return Number((await writer.batch(statements))[0].lastInsertRowid);
			const slices = rest.map((_, i) => ({ ref: 2 + i }));
			const done = await writer.unit([
				...statements,
				...storePlanUnit(actor, { ref: 0 }, slices, a.accepted, now)
			]);
			committed = true;
			return Number(done[0].lastInsertRowid);
		});
	} catch (e) {
		// Nothing of a refused file stays: its plan slices go (the import row was never written).
		await plan.discard();
		// The same file sent twice at once: the other call's preview is the answer.
		const [other] = await db
			.select()
			.from(imports)
			.where(and(eq(imports.kind, 'factory_tests'), eq(imports.sha256, sha256)));
		if (other) return summary(other, { alreadySent: true });
		throw e;
	}
	const [row] = await db.select().from(imports).where(eq(imports.id, id));
	return { ...summary(row, { preview }), committed };
}
