import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { factoryTests, moduleEvents, modules } from '$lib/server/db/schema';
import { commitImport, previewImport, STATE_UPDATE_SQL } from '$lib/server/services/imports';
import { getModuleRecord } from '$lib/server/services/modules';
import { createToken, revokeToken, verifyToken } from '$lib/server/services/tokens';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';

let db: Db;
let workshop: Actor;
let admin: Actor;
let built: string[];
let unbuilt: string;
beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	admin = await actorFor(db, 'admin@tidewater.example');
	const serials = await makeModules(db, workshop, { count: 6, built: 5 });
	built = serials.slice(0, 5);
	unbuilt = serials[5];
});

const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
const row = (serial: string, t: string, cap = 46.8, dcir = 5.1, spread = 8, ins = 500) =>
	`${serial},${t},${cap},2390,${dcir},51.2,${spread},${ins},22.5,RIG-2,T.Vale`;
const file = (lines: string[], name = 'rig.csv') => ({
	name,
	content: [HEADER, ...lines].join('\r\n') + '\r\n',
	bytes: 0
});

describe('factory test import', () => {
	it('previews without storing, explains each rejected row, then commits all accepted rows', async () => {
		const f = file([
			row(built[0], '2026-11-20T08:00:00Z'),
			row(built[1], '2026-11-20T08:05:00Z', 44.0), // below 45 Ah minimum → fail
			row(unbuilt, '2026-11-20T08:10:00Z'),
			row('PL48-26-999999Z', '2026-11-20T08:15:00Z'),
			row(built[2], '2099-01-01T00:00:00Z'),
			row(built[3], '2026-11-20T08:20:00Z', -3)
		]);
		const preview = await previewImport(db, workshop, f, new Date('2026-11-21T00:00:00Z'));
		expect(preview.import).toMatchObject({
			status: 'previewed',
			rowsTotal: 6,
			accepted: 2,
			rejected: 4,
			duplicates: 0,
			passed: 1,
			failed: 1
		});
		const messages = preview.errors.map((e) => `${e.row}:${e.column}:${e.message}`);
		expect(messages.find((m) => m.startsWith('4:'))).toMatch(/not built yet/);
		expect(messages.find((m) => m.startsWith('5:'))).toMatch(/not a valid serial|Unknown serial/);
		expect(messages.find((m) => m.startsWith('6:'))).toMatch(/future/);
		expect(messages.find((m) => m.startsWith('7:'))).toMatch(/capacity/i);
		expect(await db.select().from(factoryTests)).toHaveLength(0);

		const committed = await commitImport(
			db,
			workshop,
			preview.import.id,
			new Date('2026-11-21T00:01:00Z')
		);
		expect(committed.import.status).toBe('committed');
		const stored = await db.select().from(factoryTests);
		expect(stored).toHaveLength(2);
		const states = Object.fromEntries(
			(await db.select({ s: modules.serial, st: modules.state }).from(modules)).map((r) => [
				r.s,
				r.st
			])
		);
		expect(states[built[0]]).toBe('in_stock');
		expect(states[built[1]]).toBe('test_failed');
		// The timeline shows each stored result (read from factory_tests, not copied).
		const ev = [
			...(await getModuleRecord(db, workshop, built[0])).events,
			...(await getModuleRecord(db, workshop, built[1])).events
		].filter((e) => e.kind === 'tested');
		expect(await db.select().from(moduleEvents).where(eq(moduleEvents.kind, 'tested'))).toEqual([]);
		expect(ev.map((e) => e.summary)).toEqual(
			expect.arrayContaining([
				'Factory test passed on RIG-2',
				expect.stringMatching(/^Factory test failed: Capacity 44.* below the 45.* minimum/)
			])
		);

		// Committing again stores nothing twice.
		const again = await commitImport(db, workshop, preview.import.id);
		expect(again.alreadySent).toBe(true);
		expect(await db.select().from(factoryTests)).toHaveLength(2);
	});

	it('recognises the same file sent twice and a row already stored as a duplicate', async () => {
		const f = file(
			[row(built[0], '2026-11-20T08:00:00Z'), row(built[4], '2026-11-22T09:00:00Z')],
			'second.csv'
		);
		const p1 = await previewImport(db, workshop, f, new Date('2026-11-23T00:00:00Z'));
		expect(p1.import).toMatchObject({ accepted: 1, duplicates: 1, rejected: 0 });
		const p2 = await previewImport(db, workshop, f, new Date('2026-11-23T00:00:00Z'));
		expect(p2.alreadySent).toBe(true);
		expect(p2.import.id).toBe(p1.import.id);
	});

	it('a later retest sets the state; an older result does not overwrite a newer one', async () => {
		const later = await previewImport(
			db,
			workshop,
			file([row(built[1], '2026-11-24T10:00:00Z')], 'retest.csv'),
			new Date('2026-11-25T00:00:00Z')
		);
		await commitImport(db, workshop, later.import.id);
		const older = await previewImport(
			db,
			workshop,
			file([row(built[1], '2026-11-19T10:00:00Z', 40)], 'old.csv'),
			new Date('2026-11-25T00:00:00Z')
		);
		await commitImport(db, workshop, older.import.id);
		const [m] = await db.select().from(modules).where(eq(modules.serial, built[1]));
		expect(m.state).toBe('in_stock');
		const history = await db.select().from(factoryTests).where(eq(factoryTests.moduleId, m.id));
		expect(history).toHaveLength(3);
	});

	it('refuses file-level problems with a clear message and stores nothing', async () => {
		const before = (await db.select().from(factoryTests)).length;
		await expect(
			previewImport(db, workshop, { name: 'e.csv', content: '', bytes: 0 })
		).rejects.toThrow(/empty/i);
		await expect(
			previewImport(db, workshop, { name: 'h.csv', content: HEADER + '\n', bytes: 0 })
		).rejects.toThrow(/no data rows/i);
		await expect(
			previewImport(db, workshop, {
				name: 'b.bin',
				content: '\u0000\u0001PK\u0003\u0004binary',
				bytes: 0
			})
		).rejects.toThrow(/CSV/);
		await expect(
			previewImport(db, workshop, {
				name: 'm.csv',
				content: 'serial,capacity_ah\nPL48-26-0000016,46\n',
				bytes: 0
			})
		).rejects.toThrow(/tested_at/);
		expect((await db.select().from(factoryTests)).length).toBe(before);
	});
});

describe('rig tokens', () => {
	it('are shown once, stored hashed, record their last use and stop working when revoked', async () => {
		const { id, secret } = await createToken(db, admin, 'Rig 2, line B');
		expect(secret).toMatch(/^plk_/);
		const ok = await verifyToken(db, secret);
		expect('actor' in ok && ok.actor.label).toContain('Rig 2, line B');
		await revokeToken(db, admin, id);
		const refused = await verifyToken(db, secret);
		expect('error' in refused && refused.error).toMatch(/revoked/);
		expect('error' in (await verifyToken(db, 'plk_nonsense'))).toBe(true);
	});
});

describe('the commit’s state update', () => {
	it('starts from the plan and finds each module by primary key (no scan of the plan per module)', async () => {
		const db = await createSeededDb();
		// EXPLAIN QUERY PLAN (sqlite.org/eqp.html): the outer loop comes first. Starting at the
		// modules' state index instead makes the update quadratic in the size of the import.
		const plan = (
			await db.$client.execute({ sql: `EXPLAIN QUERY PLAN ${STATE_UPDATE_SQL}`, args: [0, 0] })
		).rows.map((r) => String(r.detail));
		expect(plan[0]).toMatch(/^SCAN j VIRTUAL TABLE/);
		expect(plan).toContain('SEARCH modules USING INTEGER PRIMARY KEY (rowid=?)');
		expect(plan.join('\n')).not.toMatch(/modules USING (COVERING )?INDEX/);
	});
});
