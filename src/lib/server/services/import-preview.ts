import { createHash, randomUUID } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { imports } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { analyseFactoryFile } from './import-analysis';
import { claimPlanStatement, dropOrphanPlans, planWriter } from './import-plans';
import { summary, type ImportResult } from './import-summary';
import { importWriter } from './import-writer';

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

/**
 * Step one: validates a rig file and keeps it with its counts and its commit plan (the
 * accepted rows as insert-ready JSON slices, in the database, so any app server can commit
 * it), storing no results. A file already sent (same SHA-256) returns the earlier import.
 * The file is read a slice at a time and each plan slice is written as it is made, so the
 * event loop is never held for long and the whole plan is never in memory at once.
 */
export async function previewImport(
	db: Db,
	actor: Actor,
	file: { name: string; content: string; bytes: number },
	now = new Date()
): Promise<ImportResult> {
	const sha256 = await sha256Text(file.content);
	const [earlier] = await db
		.select()
		.from(imports)
		.where(and(eq(imports.kind, 'factory_tests'), eq(imports.sha256, sha256)));
	if (earlier) return summary(earlier, { alreadySent: true });

	await dropOrphanPlans(db, now);
	const planKey = randomUUID();
	const plan = planWriter(db, planKey, now);
	let id: number;
	let preview;
	try {
		const a = await analyseFactoryFile(db, file.content, now, (chunk) => plan.write(chunk));
		preview = a.preview;
		await plan.done();
		const rejected = new Set(a.errors.map((e) => e.row)).size;
		const result = await withWriteLock(db, async () =>
			(await importWriter(db)).batch([
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
					sql: 'INSERT INTO import_files (import_id, content) VALUES (last_insert_rowid(), ?)',
					args: [file.content]
				},
				claimPlanStatement(planKey, sha256)
			])
		);
		id = Number(result[0].lastInsertRowid);
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
	return summary(row, { preview });
}
