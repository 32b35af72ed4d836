import { describe, expect, it } from 'vitest';
import { createClient } from '@libsql/client';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { LocalReader } from '$lib/server/db/reader';
import { dataVersion, readerOf } from '$lib/server/db';
import { findActor } from '$lib/server/services/actors';
import { endSessions } from '$lib/server/services/users';
import { createSeededDb } from '../factories/db';

/**
 * The request path's reader keeps prepared statements. The independent check is
 * `@libsql/client` (the project's driver for every other query) on the same file: the reader
 * must give the same rows, and see another connection's commit at once — a kept statement
 * must not keep an old snapshot (SQLite, "Isolation In SQLite": a read lasts until the
 * statement is reset or runs to its end).
 */
async function twoConnections() {
	const path = join(mkdtempSync(join(tmpdir(), 'packledger-reader-')), 'r.db');
	const writer = createClient({ url: `file:${path}` });
	await writer.execute('PRAGMA journal_mode = WAL');
	await writer.execute('CREATE TABLE t (id INTEGER PRIMARY KEY, name TEXT, flag INTEGER)');
	await writer.execute("INSERT INTO t (name, flag) VALUES ('a', 1), ('b', 0)");
	return { path, writer, reader: new LocalReader(path) };
}

describe('LocalReader', () => {
	it('answers the same rows as @libsql/client, as arrays in SELECT order', async () => {
		const { writer, reader } = await twoConnections();
		const sql = 'SELECT id, name, flag FROM t WHERE flag = ? OR name = ? ORDER BY id';
		const mine = (await reader.execute({ sql, args: [true, 'b'] })).rows;
		const theirs = (await writer.execute({ sql, args: [1, 'b'] })).rows.map((r) =>
			Array.from({ length: r.length }, (_, i) => r[i])
		);
		expect(mine).toEqual(theirs);
		expect(mine).toEqual([
			[1, 'a', 1],
			[2, 'b', 0]
		]);
		reader.close();
		writer.close();
	});

	it('sees a commit of another connection on the next run of a kept statement', async () => {
		const { writer, reader } = await twoConnections();
		const count = 'SELECT count(*) FROM t';
		expect((await reader.execute(count)).rows[0][0]).toBe(2);
		const v1 = (await reader.execute('PRAGMA data_version')).rows[0][0];
		await writer.execute("INSERT INTO t (name, flag) VALUES ('c', 1)");
		expect((await reader.execute(count)).rows[0][0]).toBe(3);
		const v2 = (await reader.execute('PRAGMA data_version')).rows[0][0];
		expect(v2).not.toBe(v1);
		// A statement stopped after its first of many rows would hold its snapshot: all() runs each to its end.
		expect((await reader.execute('SELECT id FROM t ORDER BY id')).rows).toHaveLength(3);
		await writer.execute("INSERT INTO t (name, flag) VALUES ('d', 0)");
		expect((await reader.execute('SELECT id FROM t ORDER BY id')).rows).toHaveLength(4);
		// The reader's snapshot ended, so a checkpoint can reset the whole WAL (busy = 0).
		const busy = (await writer.execute('PRAGMA wal_checkpoint(TRUNCATE)')).rows[0][0];
		expect(Number(busy)).toBe(0);
		reader.close();
		writer.close();
	});

	it('keeps at most 512 prepared statements and never writes', async () => {
		const { writer, reader } = await twoConnections();
		for (let i = 0; i < 600; i++) await reader.execute(`SELECT ${i} AS n`);
		expect(reader.statementCount).toBe(512);
		await expect(reader.execute("INSERT INTO t (name, flag) VALUES ('x', 0)")).rejects.toThrow();
		expect((await writer.execute('SELECT count(*) AS n FROM t')).rows[0].n).toBe(2);
		reader.close();
		writer.close();
	});

	it('refuses undefined as an argument instead of binding NULL', async () => {
		const { writer, reader } = await twoConnections();
		await expect(reader.execute({ sql: 'SELECT ? AS v', args: [undefined] })).rejects.toThrow(
			/undefined/
		);
		reader.close();
		writer.close();
	});
});

describe('the session user read on the reader', () => {
	it('refuses a session version at once after sign-out, and the data version moves', async () => {
		const db = await createSeededDb();
		const before = await findActor(db, { email: 'admin@tidewater.example' });
		expect(before).not.toBeNull();
		const byId = await findActor(db, { id: before!.userId! });
		// The same actor whichever way it is read (by e-mail through drizzle, by id on the reader).
		expect(byId).toEqual(before);
		const v1 = await dataVersion(db);
		await endSessions(db, before!.userId!);
		const after = await findActor(db, { id: before!.userId! });
		expect(after!.sessionVersion).toBe(before!.sessionVersion! + 1);
		expect(await dataVersion(db)).not.toBe(v1);
		expect(readerOf(db)).toBeInstanceOf(LocalReader);
	});
});
