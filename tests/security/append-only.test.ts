/**
 * History tables are append-only at the database itself. SQLite's REPLACE conflict
 * resolution deletes the old row without firing DELETE triggers unless recursive triggers
 * are on (https://www.sqlite.org/lang_conflict.html), so a BEFORE INSERT trigger refuses any
 * insert that meets an existing row; an upsert (INSERT … ON CONFLICT DO UPDATE) fires the
 * same trigger first (https://www.sqlite.org/lang_upsert.html).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { Db } from '$lib/server/db';
import { createSeededDb } from '../factories/db';

let db: Db;
const exec = (sql: string, args: (string | number | null)[] = []) =>
	db.$client.execute({ sql, args });

/** One row per history table, with every NOT NULL column filled. */
const HISTORY: Record<string, { insert: string; column: string }> = {
	audit_log: {
		insert: `INSERT INTO audit_log (id, at, actor_label, action, entity, entity_id) VALUES (?, 1, 'x', 'a', 'e', '1')`,
		column: 'action'
	},
	module_events: {
		insert: `INSERT INTO module_events (id, module_id, kind, at, actor_label, summary) VALUES (?, 1, 'allocated', 1, 'x', 'first')`,
		column: 'summary'
	},
	claim_events: {
		insert: `INSERT INTO claim_events (id, claim_id, at, actor_label, to_state) VALUES (?, 1, 1, 'x', 'filed')`,
		column: 'to_state'
	},
	factory_tests: {
		insert: `INSERT INTO factory_tests (id, module_id, row_key, tested_at, capacity_ah, dcir_mohm, dcir_source, cell_spread_mv, insulation_mohm, outcome, failures)
		         VALUES (?, 1, 'key-' || CAST(?1 AS INTEGER), 1, 100, 1, 'measured', 5, 500, 'pass', '[]')`,
		column: 'outcome'
	},
	commissionings: {
		insert: `INSERT INTO commissionings (id, system_id, overall, technician_user_id, technician_name, licence_number, measurements, items, commissioned_on)
		         VALUES (?, 1, 'pass', 1, 'x', 'L1', '{}', '[]', '2026-01-01')`,
		column: 'overall'
	}
};

const ID = 900_001;

beforeAll(async () => {
	db = await createSeededDb();
	await exec('PRAGMA foreign_keys = OFF'); // the rows need no real module, claim or system
	for (const { insert } of Object.values(HISTORY)) await exec(insert, [ID]);
});

describe.each(Object.entries(HISTORY))('%s is append-only', (table, { insert, column }) => {
	const row = async () => (await exec(`SELECT * FROM ${table} WHERE id = ?`, [ID])).rows[0];

	it('refuses UPDATE', async () => {
		await expect(
			exec(`UPDATE ${table} SET ${column} = ${column} WHERE id = ?`, [ID])
		).rejects.toThrow(/append-only/);
	});
	it('refuses DELETE', async () => {
		await expect(exec(`DELETE FROM ${table} WHERE id = ?`, [ID])).rejects.toThrow(/append-only/);
	});
	it('refuses REPLACE INTO and INSERT OR REPLACE of an existing id', async () => {
		const before = await row();
		await expect(exec(insert.replace(/^\s*INSERT INTO/, 'REPLACE INTO'), [ID])).rejects.toThrow(
			/append-only/
		);
		await expect(
			exec(insert.replace(/^\s*INSERT INTO/, 'INSERT OR REPLACE INTO'), [ID])
		).rejects.toThrow(/append-only/);
		expect(await row()).toEqual(before);
	});
	it('refuses an upsert of an existing id', async () => {
		const before = await row();
		await expect(
			exec(`${insert} ON CONFLICT (id) DO UPDATE SET ${column} = excluded.${column}`, [ID])
		).rejects.toThrow(/append-only/);
		await expect(exec(`${insert} ON CONFLICT DO NOTHING`, [ID])).rejects.toThrow(/append-only/);
		expect(await row()).toEqual(before);
	});
	it('still takes new rows', async () => {
		await exec(insert, [ID + 1]);
		expect(
			(await exec(`SELECT count(*) AS n FROM ${table} WHERE id = ?`, [ID + 1])).rows[0].n
		).toBe(1);
	});
});

describe('other unique keys cannot be used to replace history either', () => {
	it('a REPLACE of factory_tests with a new id but an existing row_key is refused', async () => {
		await expect(
			exec(
				`REPLACE INTO factory_tests (id, module_id, row_key, tested_at, capacity_ah, dcir_mohm, dcir_source, cell_spread_mv, insulation_mohm, outcome, failures)
				 VALUES (?, 1, ?, 1, 1, 1, 'measured', 5, 500, 'fail', '[]')`,
				[ID + 50, `key-${ID}`]
			)
		).rejects.toThrow(/append-only/);
	});
});
