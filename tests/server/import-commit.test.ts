import { createHash } from 'node:crypto';
import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { createClient } from '@libsql/client';
import type { Db } from '$lib/server/db';
import { factoryTests, importPlanChunks, imports, modules } from '$lib/server/db/schema';
import { commitImport, previewImport } from '$lib/server/services/imports';
import { sha256Text } from '$lib/server/services/import-preview';
import { CHUNK_ROWS } from '$lib/server/services/import-analysis';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';

const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
const base = Date.parse('2026-11-20T00:00:00Z');
const at = (i: number) => new Date(base + i * 1000).toISOString();
const line = (serial: string, i: number, cap = 46.8) =>
	`${serial},${at(i)},${cap},2390,5.1,51.2,8,500,22.5,RIG-2,T.Vale`;
const csv = (lines: string[]) => [HEADER, ...lines].join('\r\n') + '\r\n';
const NOW = new Date('2026-11-25T00:00:00Z');

let db: Db;
let workshop: Actor;
let serials: string[];
beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	serials = await makeModules(db, workshop, { count: 4, built: 4 });
});

/** More rows than one plan slice holds: three modules tested again and again. */
function manyRows(n: number, offset: number, failAt = -1) {
	return Array.from({ length: n }, (_, i) =>
		line(serials[i % 3], offset + i, i === failAt ? 44 : 46.8)
	);
}

describe('the commit in plan slices', () => {
	it('keeps a plan of several slices and stores all of it, the latest result of each module setting its state', async () => {
		const n = CHUNK_ROWS * 2 + 7;
		// The last row of module 0 fails (44 Ah is below the 45 Ah minimum of TC-HC-48), in the
		// third slice; module 1's and 2's last rows pass.
		const lastOf0 = n - 1 - ((n - 1) % 3);
		const p = await previewImport(
			db,
			workshop,
			{ name: 'many.csv', content: csv(manyRows(n, 0, lastOf0)), bytes: 0 },
			NOW
		);
		expect(p.import).toMatchObject({ accepted: n, rejected: 0, failed: 1 });
		const chunks = await db
			.select()
			.from(importPlanChunks)
			.where(eq(importPlanChunks.importId, p.import.id));
		expect(chunks.map((c) => c.seq)).toEqual([0, 1, 2]);

		const c = await commitImport(db, workshop, p.import.id, NOW);
		expect(c.import).toMatchObject({ status: 'committed', accepted: n, passed: n - 1, failed: 1 });
		const stored = await db
			.select({ id: factoryTests.id })
			.from(factoryTests)
			.where(eq(factoryTests.importId, p.import.id));
		expect(stored).toHaveLength(n);
		const state = async (s: string) =>
			(await db.select().from(modules).where(eq(modules.serial, s)))[0];
		expect((await state(serials[0])).state).toBe('test_failed');
		expect((await state(serials[0])).testedAt?.toISOString()).toBe(at(lastOf0));
		expect((await state(serials[1])).state).toBe('in_stock');
		// The plan is gone once stored.
		expect(
			await db.select().from(importPlanChunks).where(eq(importPlanChunks.importId, p.import.id))
		).toEqual([]);
	});

	it('stores nothing when a slice fails half-way, and keeps the plan for another try', async () => {
		const n = CHUNK_ROWS * 2 + 3;
		const p = await previewImport(
			db,
			workshop,
			{ name: 'broken.csv', content: csv(manyRows(n, 100_000)), bytes: 0 },
			NOW
		);
		const before = (await db.select({ id: factoryTests.id }).from(factoryTests)).length;
		const [m0] = await db.select().from(modules).where(eq(modules.serial, serials[0]));
		// The second slice no longer reads as JSON: its insert fails after the first slice's rows
		// and states were written inside the transaction.
		await db.$client.execute({
			sql: "UPDATE import_plan_chunks SET rows = '[not json' WHERE import_id = ? AND seq = 1",
			args: [p.import.id]
		});
		await expect(commitImport(db, workshop, p.import.id, NOW)).rejects.toThrow(/JSON/i);
		expect((await db.select({ id: factoryTests.id }).from(factoryTests)).length).toBe(before);
		const [m0After] = await db.select().from(modules).where(eq(modules.serial, serials[0]));
		expect(m0After.testedAt).toEqual(m0.testedAt);
		const [row] = await db.select().from(imports).where(eq(imports.id, p.import.id));
		expect(row.status).toBe('previewed');
		expect(
			await db.select().from(importPlanChunks).where(eq(importPlanChunks.importId, p.import.id))
		).toHaveLength(3);
	});

	it('a reader during the commit sees none of the import or all of it', async () => {
		const n = CHUNK_ROWS * 3;
		const p = await previewImport(
			db,
			workshop,
			{ name: 'watched.csv', content: csv(manyRows(n, 200_000)), bytes: 0 },
			NOW
		);
		// Another connection, as another app server would read.
		const file = String(
			(await db.$client.execute("SELECT file FROM pragma_database_list WHERE name = 'main'"))
				.rows[0].file
		);
		const other = createClient({ url: `file:${file}` });
		const seen = new Set<number>();
		let done = false;
		const watching = (async () => {
			while (!done) {
				const r = await other.execute({
					sql: 'SELECT count(*) AS n FROM factory_tests WHERE import_id = ?',
					args: [p.import.id]
				});
				seen.add(Number(r.rows[0].n));
				await new Promise((r) => setImmediate(r));
			}
		})();
		await commitImport(db, workshop, p.import.id, NOW);
		done = true;
		await watching;
		const last = await other.execute({
			sql: 'SELECT count(*) AS n FROM factory_tests WHERE import_id = ?',
			args: [p.import.id]
		});
		other.close();
		expect(Number(last.rows[0].n)).toBe(n);
		expect([...seen].every((c) => c === 0 || c === n)).toBe(true);
	});

	it('an import previewed before plans were kept in slices is judged again at commit', async () => {
		const p = await previewImport(
			db,
			workshop,
			{ name: 'old.csv', content: csv([line(serials[3], 400_000)]), bytes: 0 },
			NOW
		);
		await db.$client.execute({
			sql: 'DELETE FROM import_plan_chunks WHERE import_id = ?',
			args: [p.import.id]
		});
		const c = await commitImport(db, workshop, p.import.id, NOW);
		expect(c.import).toMatchObject({ status: 'committed', accepted: 1, passed: 1 });
		expect(c.preview.map((r) => r.serial)).toEqual([serials[3]]);
		expect(
			await db.select().from(factoryTests).where(eq(factoryTests.importId, p.import.id))
		).toHaveLength(1);
	});

	it('a refused file leaves no plan behind', async () => {
		// The unclosed quote is found only in a later slice of the file (after about 256 KB).
		const rows = Array.from({ length: 6000 }, (_, i) => line(serials[3], 300_000 + i));
		rows.push(`${serials[3]},"${at(999_999)},46.8,2390,5.1,51.2,8,500,22.5,RIG-2,T.Vale`);
		const before = (await db.select({ id: importPlanChunks.id }).from(importPlanChunks)).length;
		await expect(
			previewImport(db, workshop, { name: 'quote.csv', content: csv(rows), bytes: 0 }, NOW)
		).rejects.toThrow(/never closed/);
		expect((await db.select({ id: importPlanChunks.id }).from(importPlanChunks)).length).toBe(
			before
		);
	});
});

describe('preview and store in one call (?commit=accepted)', () => {
	it('stores a small file in the preview’s own transaction', async () => {
		const p = await previewImport(
			db,
			workshop,
			{ name: 'one-call.csv', content: csv(manyRows(30, 410_000)), bytes: 0 },
			NOW,
			{ commit: true }
		);
		expect(p.committed).toBe(true);
		expect(p.import).toMatchObject({ status: 'committed', accepted: 30, passed: 30 });
		expect(
			await db.select().from(factoryTests).where(eq(factoryTests.importId, p.import.id))
		).toHaveLength(30);
		const audit = await db.$client.execute({
			sql: "SELECT count(*) AS n FROM audit_log WHERE action = 'import.commit' AND entity_id = ?",
			args: [String(p.import.id)]
		});
		expect(Number(audit.rows[0].n)).toBe(1);
		// One message to the writer stored it all: no plan slice is left behind.
		const left = await db.$client.execute({
			sql: 'SELECT count(*) AS n FROM import_plan_chunks WHERE import_id = ?',
			args: [p.import.id]
		});
		expect(Number(left.rows[0].n)).toBe(0);
		expect(p.import.failed).toBe(0);
	});

	it('leaves a file of more than eight plan slices previewed, for commitImport', async () => {
		const n = CHUNK_ROWS * 8 + 1;
		const p = await previewImport(
			db,
			workshop,
			{ name: 'big-one-call.csv', content: csv(manyRows(n, 420_000)), bytes: 0 },
			NOW,
			{ commit: true }
		);
		expect(p.committed).toBe(false);
		expect(p.import.status).toBe('previewed');
		const c = await commitImport(db, workshop, p.import.id, NOW);
		expect(c.import).toMatchObject({ status: 'committed', accepted: n });
	});
});

describe('row keys looked up only for modules that have a result', () => {
	it('every stored result has set its module’s tested_at (the rule the preview relies on)', async () => {
		// After the imports above (slices, retries, a rolled-back commit) and the demo's own.
		const r = await db.$client.execute(
			'SELECT count(*) AS n FROM factory_tests t JOIN modules m ON m.id = t.module_id WHERE m.tested_at IS NULL'
		);
		expect(Number(r.rows[0].n)).toBe(0);
		const stored = await db.$client.execute('SELECT count(*) AS n FROM factory_tests');
		expect(Number(stored.rows[0].n)).toBeGreaterThan(0);
	});

	it('finds a stored row of a tested module as a duplicate, and the commit still skips one the preview could not see', async () => {
		const [fresh, other] = await makeModules(db, workshop, { count: 2, built: 2 });
		const first = await previewImport(
			db,
			workshop,
			{ name: 'first-test.csv', content: csv([line(fresh, 430_000)]), bytes: 0 },
			NOW
		);
		await commitImport(db, workshop, first.import.id, NOW);
		// The same measurement again, with a new one: the module has a result now, so its row
		// key is looked up and found.
		const again = await previewImport(
			db,
			workshop,
			{ name: 'again.csv', content: csv([line(fresh, 430_000), line(fresh, 430_001)]), bytes: 0 },
			NOW
		);
		expect(again.import).toMatchObject({ accepted: 1, duplicates: 1 });
		// A result stored for a module whose tested_at was cleared by hand (the rule broken):
		// the preview takes the row as new, the commit's own check skips it and the counts
		// say what was stored.
		const p = await previewImport(
			db,
			workshop,
			{ name: 'blind.csv', content: csv([line(other, 430_010)]), bytes: 0 },
			NOW
		);
		await commitImport(db, workshop, p.import.id, NOW);
		await db.$client.execute({
			sql: 'UPDATE modules SET tested_at = NULL WHERE serial = ?',
			args: [other]
		});
		const blind = await previewImport(
			db,
			workshop,
			{
				name: 'blind-again.csv',
				content: csv([line(other, 430_010), line(other, 430_011)]),
				bytes: 0
			},
			NOW
		);
		expect(blind.import).toMatchObject({ accepted: 2, duplicates: 0 });
		const c = await commitImport(db, workshop, blind.import.id, NOW);
		expect(c.import).toMatchObject({ status: 'committed', accepted: 1 });
		const rows = await db.$client.execute({
			sql: 'SELECT count(*) AS n FROM factory_tests t JOIN modules m ON m.id = t.module_id WHERE m.serial = ?',
			args: [other]
		});
		expect(Number(rows.rows[0].n)).toBe(2);
	});
});

describe('the row key the commit makes', () => {
	it('is the serial in capitals, the instant in ms and the rig, between U+001F', async () => {
		const [a, b] = await makeModules(db, workshop, { count: 2, built: 2 });
		// One row as the rig wrote it (serial in lower case, a fraction of a second), one with
		// no rig; the expected keys are built by hand, the instants read by Date.parse (ECMA-262
		// date time string format).
		const withRig = `${a.toLowerCase()},2026-11-21T10:15:30.250Z,46.8,2390,5.1,51.2,8,500,22.5,RIG-7,T.Vale`;
		const noRig = `${b},2026-11-21T10:16:00Z,46.8,2390,5.1,51.2,8,500,22.5,,T.Vale`;
		const p = await previewImport(
			db,
			workshop,
			{ name: 'keys.csv', content: csv([withRig, noRig]), bytes: 0 },
			NOW
		);
		expect(p.import).toMatchObject({ accepted: 2 });
		await commitImport(db, workshop, p.import.id, NOW);
		const keys = await db
			.select({ rowKey: factoryTests.rowKey })
			.from(factoryTests)
			.where(eq(factoryTests.importId, p.import.id));
		expect(keys.map((k) => k.rowKey).sort()).toEqual(
			[
				`${a.toUpperCase()}\u001f${Date.parse('2026-11-21T10:15:30.250Z')}\u001fRIG-7`,
				`${b.toUpperCase()}\u001f${Date.parse('2026-11-21T10:16:00Z')}\u001f`
			].sort()
		);
		// And the preview finds them again by the key it makes itself: both are duplicates now.
		const again = await previewImport(
			db,
			workshop,
			{ name: 'keys-again.csv', content: csv([noRig, withRig]), bytes: 0 },
			NOW
		);
		expect(again.import).toMatchObject({ accepted: 0, duplicates: 2 });
	});
});

describe('sha256Text', () => {
	it('gives the FIPS 180-2 digest of "abc"', async () => {
		// FIPS 180-2, appendix B.1 (one-block message "abc").
		expect(await sha256Text('abc')).toBe(
			'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad'
		);
	});

	it('matches a one-shot digest when a slice boundary falls inside a surrogate pair', async () => {
		// node:crypto over the whole UTF-8 text at once is the independent reference.
		const text = 'a'.repeat((1 << 20) - 1) + '\u{1F50B}' + 'b'.repeat(10);
		const whole = createHash('sha256').update(Buffer.from(text, 'utf8')).digest('hex');
		expect(await sha256Text(text)).toBe(whole);
	});
});
