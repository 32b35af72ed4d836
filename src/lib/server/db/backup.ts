import { createClient } from '@libsql/client';
import { createHash } from 'node:crypto';
import {
	copyFileSync,
	existsSync,
	mkdtempSync,
	readFileSync,
	renameSync,
	rmSync,
	statSync,
	writeFileSync
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { assertValidKey, type ObjectStore } from '$lib/server/storage';
import type { Db } from './client';

/** Rows per table of a database file, and SQLite's own integrity verdict. */
export interface FileCheck {
	integrity: string;
	migrations: number;
	tables: Record<string, number>;
}

const pathOf = (url: string) => (url.startsWith('file:') ? url.slice('file:'.length) : url);

/** Opens a database file read-only for checking: `PRAGMA integrity_check` and a row count per table. */
export async function checkDatabaseFile(file: string): Promise<FileCheck> {
	if (!existsSync(file)) throw new Error(`${file} does not exist.`);
	const c = createClient({ url: `file:${resolve(file)}` });
	try {
		const integrity = (await c.execute('PRAGMA integrity_check')).rows
			.map((r) => String(r[0]))
			.join('; ');
		const names = (
			await c.execute(
				"SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name"
			)
		).rows.map((r) => String(r.name));
		const tables: Record<string, number> = {};
		for (const n of names)
			tables[n] = Number((await c.execute(`SELECT count(*) AS n FROM "${n}"`)).rows[0].n);
		return { integrity, migrations: tables['__drizzle_migrations'] ?? 0, tables };
	} finally {
		c.close();
	}
}

/**
 * A consistent copy of the database while the app keeps serving: `VACUUM INTO` reads one
 * snapshot (a read transaction; writers in WAL mode go on) and writes a compact new file.
 * The file must not exist. Local SQLite files only: a libSQL server makes its own backups.
 */
export async function backupDatabase(db: Db, file: string): Promise<FileCheck & { bytes: number }> {
	const target = resolve(file);
	if (existsSync(target)) throw new Error(`${file} already exists; choose a new file name.`);
	await db.$client.execute({ sql: 'VACUUM INTO ?', args: [target] });
	const check = await checkDatabaseFile(target);
	if (check.integrity !== 'ok') throw new Error(`The backup failed its check: ${check.integrity}`);
	return { ...check, bytes: statSync(target).size };
}

/**
 * Puts a backup in place of the database at `url` (the app must be stopped): the backup is
 * checked first (integrity, migrations), copied beside the target, checked again, then
 * renamed over it; the old file's WAL and shared-memory files are removed with it.
 */
export async function restoreDatabase(file: string, url: string): Promise<FileCheck> {
	const before = await checkDatabaseFile(file);
	if (before.integrity !== 'ok') throw new Error(`${file} is damaged: ${before.integrity}`);
	if (before.migrations === 0) throw new Error(`${file} is not a Packledger database.`);
	const target = resolve(pathOf(url));
	const staging = `${target}.restoring`;
	copyFileSync(file, staging);
	const copy = await checkDatabaseFile(staging);
	if (copy.integrity !== 'ok' || JSON.stringify(copy.tables) !== JSON.stringify(before.tables)) {
		rmSync(staging, { force: true });
		throw new Error('The copied backup does not match the backup; nothing was replaced.');
	}
	for (const side of ['-wal', '-shm']) rmSync(target + side, { force: true });
	renameSync(staging, target);
	return checkDatabaseFile(target);
}

/** A backup's place in the bucket: `s3:backups/packledger-2026-12-02` (a storage key after `s3:`). */
export const s3KeyOf = (target: string) => (target.startsWith('s3:') ? target.slice(3) : null);

/**
 * A backup sent to an S3-compatible bucket: taken and checked in a local temporary file as
 * above, uploaded, read back and compared byte for byte (SHA-256) before the local copy is
 * removed, so a backup that is in the bucket is known to be whole.
 */
export async function backupToStore(
	db: Db,
	key: string,
	store: ObjectStore
): Promise<FileCheck & { bytes: number; sha256: string }> {
	assertValidKey(key);
	if (await store.get(key)) throw new Error(`${key} is already in the bucket; choose a new name.`);
	const dir = mkdtempSync(join(tmpdir(), 'packledger-backup-'));
	try {
		const file = join(dir, 'backup.db');
		const check = await backupDatabase(db, file);
		const bytes = new Uint8Array(readFileSync(file));
		const sha256 = createHash('sha256').update(bytes).digest('hex');
		await store.put(key, bytes, 'application/vnd.sqlite3');
		const back = await store.get(key);
		if (!back || createHash('sha256').update(back.bytes).digest('hex') !== sha256)
			throw new Error(
				`The backup read back from the bucket under ${key} differs from the one sent.`
			);
		return { ...check, sha256 };
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
}

/** Restores a backup kept in the bucket: downloaded to a temporary file, then `restoreDatabase`. */
export async function restoreFromStore(
	key: string,
	store: ObjectStore,
	url: string
): Promise<FileCheck> {
	const object = await store.get(key);
	if (!object) throw new Error(`There is no backup ${key} in the bucket.`);
	const dir = mkdtempSync(join(tmpdir(), 'packledger-restore-'));
	try {
		const file = join(dir, 'backup.db');
		writeFileSync(file, object.bytes);
		return await restoreDatabase(file, url);
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
}
