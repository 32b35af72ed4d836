import { describe, expect, it } from 'vitest';
import { createClient, type Row } from '@libsql/client';
import { drizzle } from 'drizzle-orm/libsql';
import { eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { LocalReader } from '$lib/server/db/reader';
import { isSelect, keepSelects } from '$lib/server/db/kept-selects';
import { sqliteTable, integer, text } from 'drizzle-orm/sqlite-core';

/**
 * SELECTs sent through `keepSelects` run on a read connection with kept statements. The
 * independent check is `@libsql/client` itself on the same file (the driver every other
 * query uses): the rows must look the same to every way the code reads them — by name, by
 * index, `Object.keys`, `JSON.stringify`, spread, `Array.prototype.slice.call` (drizzle) —
 * and a commit on the client must be seen by the next SELECT.
 */
async function fixture() {
	const path = join(mkdtempSync(join(tmpdir(), 'packledger-kept-')), 'k.db');
	const client = createClient({ url: `file:${path}` });
	await client.execute('PRAGMA journal_mode = WAL');
	await client.execute(
		'CREATE TABLE t (id INTEGER PRIMARY KEY, name TEXT, flag INTEGER, data BLOB)'
	);
	await client.execute(
		"INSERT INTO t (name, flag, data) VALUES ('a', 1, x'0102ff'), (NULL, 0, NULL)"
	);
	const reader = new LocalReader(path);
	return { client, reader, kept: keepSelects(client, () => reader) };
}

const views = (r: Row) => ({
	keys: Object.keys(r),
	json: JSON.stringify(r),
	spread: { ...r },
	length: r.length,
	byIndex: Array.prototype.slice.call(r),
	entries: Object.entries(r)
});

describe('keepSelects', () => {
	it('answers rows that look like the client’s in every way the code reads them', async () => {
		const { client, reader, kept } = await fixture();
		// A duplicate column name: the first one gives the named value, both are readable by index.
		const sql = 'SELECT id, name, flag, id * 10 AS id, data FROM t ORDER BY id';
		const theirs = await client.execute(sql);
		const mine = await kept.execute(sql);
		expect(mine.columns).toEqual(theirs.columns);
		expect(mine.rows).toHaveLength(2);
		for (let i = 0; i < 2; i++) {
			const a = views(mine.rows[i]);
			const b = views(theirs.rows[i]);
			expect(a.keys).toEqual(b.keys);
			expect(a.json).toBe(b.json);
			expect(a.length).toBe(b.length);
			expect(a.entries.map(([k]) => k)).toEqual(b.entries.map(([k]) => k));
			expect(Object.keys(a.spread)).toEqual(Object.keys(b.spread));
			expect(a.byIndex.slice(0, 4)).toEqual(b.byIndex.slice(0, 4));
		}
		expect(mine.rows[0][3]).toBe(10);
		expect(mine.rows[0].id).toBe(1);
		// A BLOB comes as an ArrayBuffer of its bytes, as the client answers it.
		expect(mine.rows[0].data).toBeInstanceOf(ArrayBuffer);
		expect([...new Uint8Array(mine.rows[0].data as ArrayBuffer)]).toEqual([1, 2, 255]);
		expect([...new Uint8Array(theirs.rows[0].data as ArrayBuffer)].slice(0, 3)).toEqual([
			1, 2, 255
		]);
		reader.close();
		client.close();
	});

	it('sends writes to the client and sees their commit in the next SELECT', async () => {
		const { client, reader, kept } = await fixture();
		const count = async () => Number((await kept.execute('SELECT count(*) AS n FROM t')).rows[0].n);
		expect(await count()).toBe(2);
		const ins = await kept.execute({
			sql: 'INSERT INTO t (name, flag) VALUES (?, ?)',
			args: ['c', 1]
		});
		expect(ins.rowsAffected).toBe(1);
		expect(await count()).toBe(3);
		expect(reader.statementCount).toBe(1);
		// A transaction's reads stay on its own connection: it sees its own uncommitted row.
		const tx = await kept.transaction('write');
		await tx.execute("INSERT INTO t (name, flag) VALUES ('d', 0)");
		expect(Number((await tx.execute('SELECT count(*) AS n FROM t')).rows[0].n)).toBe(4);
		expect(await count()).toBe(3);
		await tx.commit();
		expect(await count()).toBe(4);
		reader.close();
		client.close();
	});

	it('gives drizzle the same results as the client', async () => {
		const { client, reader, kept } = await fixture();
		const t = sqliteTable('t', {
			id: integer('id').primaryKey(),
			name: text('name'),
			flag: integer('flag', { mode: 'boolean' })
		});
		const plain = drizzle(client);
		const mine = drizzle(kept);
		const q = (db: typeof plain) =>
			db.select({ id: t.id, name: t.name, flag: t.flag }).from(t).orderBy(t.id);
		expect(await q(mine)).toEqual(await q(plain));
		expect(await q(mine)).toEqual([
			{ id: 1, name: 'a', flag: true },
			{ id: 2, name: null, flag: false }
		]);
		expect(await mine.select().from(t).where(eq(t.id, 2)).get()).toEqual(
			await plain.select().from(t).where(eq(t.id, 2)).get()
		);
		reader.close();
		client.close();
	});

	it('recognises a plain SELECT by its first word only', () => {
		expect(isSelect('SELECT 1')).toBe(true);
		expect(isSelect('  \n\tselect * from t')).toBe(true);
		expect(isSelect('Select\nid from t')).toBe(true);
		expect(isSelect('SELECTED')).toBe(false);
		expect(isSelect('selection from t')).toBe(false);
		expect(isSelect('select')).toBe(false);
		expect(isSelect('WITH x AS (SELECT 1) SELECT * FROM x')).toBe(false);
		expect(isSelect('INSERT INTO t SELECT 1')).toBe(false);
		expect(isSelect('PRAGMA data_version')).toBe(false);
		expect(isSelect('')).toBe(false);
		// A long statement is read by its first word, not scanned (bounded time).
		expect(isSelect('select ' + 'x'.repeat(200_000))).toBe(true);
	});
});
