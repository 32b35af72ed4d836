import { createClient } from '@libsql/client';
import { copyFileSync, existsSync, renameSync, rmSync, statSync } from 'node:fs';
import { resolve } from 'node:path';
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
