import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { mailOutbox, moduleEvents } from '$lib/server/db/schema';
import { sendServiceNotice, traceCsv, traceModules } from '$lib/server/services/trace';
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
