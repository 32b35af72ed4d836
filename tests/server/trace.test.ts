import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { mailOutbox, moduleEvents } from '$lib/server/db/schema';
import { sendServiceNotice, traceCsv, traceJson, traceModules } from '$lib/server/services/trace';
import { modules } from '$lib/server/db/schema';
import { inArray } from 'drizzle-orm';
import { STATE_LABELS } from '$lib/module-states';
import { dashboardFigures, mondayOf } from '$lib/server/services/dashboard';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { assignToDealer, makeModules } from '../factories/modules';

let db: Db;
let admin: Actor;
let lotA: string[];
beforeAll(async () => {
	db = await createSeededDb();
	admin = await actorFor(db, 'admin@tidewater.example');
	const workshop = await actorFor(db, 'workshop@tidewater.example');
	lotA = await makeModules(db, workshop, { count: 5, built: 5, lots: ['HCL-2611-A'] });
	await makeModules(db, workshop, { count: 3, built: 3, lots: ['HCL-2611-B'] });
	await assignToDealer(db, lotA.slice(0, 2), 'Saltmarsh Solar');
	await assignToDealer(db, lotA.slice(2, 3), 'Ridgeline Off-Grid Supply');
});

describe('traceability', () => {
	it('finds every module of a cell lot with counts per dealer', async () => {
		const r = await traceModules(db, { lot: 'HCL-2611-A' });
		expect(r.items.map((i) => i.serial).sort()).toEqual([...lotA].sort());
		expect(r.byDealer).toEqual(
			expect.arrayContaining([
				expect.objectContaining({ dealer: 'Saltmarsh Solar', count: 2 }),
				expect.objectContaining({ dealer: 'Ridgeline Off-Grid Supply', count: 1 }),
				expect.objectContaining({ dealer: 'Tidewater Cellworks (not shipped)', count: 2 })
			])
		);
		expect(r.items.find((i) => i.serial === lotA[4])!.whereNow).toMatch(/^Workshop/);
	});

	it('answers the API as one JSON text: items by serial without ids, counts per dealer', async () => {
		const r = JSON.parse(await traceJson(db, { lot: 'HCL-2611-A' }));
		expect(Object.keys(r)).toEqual(['total', 'truncated', 'byDealer', 'items']);
		expect([r.total, r.truncated]).toEqual([5, false]);
		const rows = await db
			.select({ serial: modules.serial, builtAt: modules.builtAt })
			.from(modules)
			.where(inArray(modules.serial, lotA));
		const sorted = [...lotA].sort();
		expect(r.items.map((i: { serial: string }) => i.serial)).toEqual(sorted);
		const first = r.items[0];
		expect(Object.keys(first)).toEqual([
			'serial',
			'state',
			'model',
			'builtAt',
			'dealer',
			'site',
			'system',
			'whereNow'
		]);
		// The instant as JSON.stringify gives a Date.
		expect(first.builtAt).toBe(rows.find((x) => x.serial === sorted[0])!.builtAt!.toISOString());
		const where = Object.fromEntries(
			r.items.map((i: { serial: string; whereNow: string }) => [i.serial, i.whereNow])
		);
		expect(where[lotA[0]]).toBe('At Saltmarsh Solar');
		expect(where[lotA[4]]).toBe(`Workshop — ${STATE_LABELS.built}`);
		// Most units first; a tie keeps the order of the first serial.
		expect(r.byDealer.map((d: { dealer: string; count: number }) => [d.dealer, d.count])).toEqual([
			['Saltmarsh Solar', 2],
			['Tidewater Cellworks (not shipped)', 2],
			['Ridgeline Off-Grid Supply', 1]
		]);
	});

	it('reads build dates as days on the assembler calendar (Etc/GMT-10 is UTC+10, IANA tz database)', async () => {
		// 13:59:59.999Z is 23:59:59.999 on 1 March there; 14:00Z is midnight starting 2 March.
		const own = await createSeededDb();
		const workshop = await actorFor(own, 'workshop@tidewater.example');
		const pair = await makeModules(own, workshop, { count: 2, built: 2, lots: ['HCL-2603-Z'] });
		await own
			.update(modules)
			.set({ builtAt: new Date('2026-03-01T13:59:59.999Z') })
			.where(eq(modules.serial, pair[0]));
		await own
			.update(modules)
			.set({ builtAt: new Date('2026-03-01T14:00:00.000Z') })
			.where(eq(modules.serial, pair[1]));
		const day = async (d: string) =>
			(await traceModules(own, { lot: 'HCL-2603-Z', builtFrom: d, builtTo: d })).items.map(
				(i) => i.serial
			);
		expect(await day('2026-03-01')).toEqual([pair[0]]);
		expect(await day('2026-03-02')).toEqual([pair[1]]);
	});

	it('exports the list as CSV', async () => {
		const csv = await traceCsv(db, { lot: 'HCL-2611-A' });
		expect(csv.split('\r\n')[0]).toBe('serial,model,state,built_at,dealer,site,system');
		expect(csv.split('\r\n')).toHaveLength(6);
	});

	it('sends each affected dealer one notice with only its own units, and records it on each module', async () => {
		const sent = await sendServiceNotice(
			db,
			admin,
			{ lot: 'HCL-2611-A' },
			{
				subject: 'Re-torque terminal bolts',
				body: 'Please re-torque the terminal bolts of the listed modules at the next visit.'
			}
		);
		expect(sent).toEqual({ dealers: 2, modules: 3 });
		const mails = await db.select().from(mailOutbox);
		const salt = mails.find((m) => m.toAddr.includes('saltmarsh'))!;
		expect(salt.subject).toContain('Re-torque terminal bolts');
		expect(salt.text).toContain(lotA[0]);
		expect(salt.text).not.toContain(lotA[2]);
		const events = await db
			.select()
			.from(moduleEvents)
			.where(eq(moduleEvents.kind, 'service_notice'));
		expect(events).toHaveLength(3);
	});

	it('refuses a notice when nothing has left the workshop', async () => {
		await expect(
			sendServiceNotice(
				db,
				admin,
				{ lot: 'HCL-2611-B' },
				{ subject: 'Nothing', body: 'Nothing to tell anyone about really.' }
			)
		).rejects.toThrow(/no dealer to notify/);
	});
});

describe('dashboard', () => {
	it('counts by state and model and builds per Monday-based week', async () => {
		const now = new Date();
		const f = await dashboardFigures(db, now);
		expect(f.byState.built).toBe(5);
		expect(f.byState.shipped).toBe(3);
		expect(f.builds.at(-1)).toEqual({ week: mondayOf(now), n: 8 });
		expect(f.builds).toHaveLength(12);
	});
	it('mondayOf gives the Monday on or before a date (UTC)', () => {
		expect(mondayOf(new Date('2026-12-02T10:00:00Z'))).toBe('2026-11-30');
		expect(mondayOf(new Date('2026-11-30T00:00:00Z'))).toBe('2026-11-30');
		expect(mondayOf(new Date('2026-11-29T23:59:00Z'))).toBe('2026-11-23');
		expect(mondayOf(new Date('2026-12-02T10:00:00Z'), 1)).toBe('2026-11-23');
	});
});
