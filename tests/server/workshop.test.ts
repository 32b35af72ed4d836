/**
 * The workshop's actions on a failed module (issue 13, item 2) and the public record's truth
 * (item 1), through the services and the API routes, on a seeded database. The expected
 * states and words follow the module's life as the product describes it: a failed module is
 * reworked and retested, or scrapped; a scrapped module is waste (Regulation (EU) 2023/1542,
 * Annex XIII §4(c) statuses); a module in service is never scrapped.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { and, count, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { auditLog, moduleCellLots, moduleEvents, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { commitImport, previewImport } from '$lib/server/services/imports';
import { correctBuild, reworkModule, scrapModule } from '$lib/server/services/workshop';
import { getModuleRecord, getPublicRecord } from '$lib/server/services/modules';
import { traceModules } from '$lib/server/services/trace';
import { POST as reworkPost } from '../../src/routes/api/modules/[serial]/rework/+server';
import { POST as scrapPost } from '../../src/routes/api/modules/[serial]/scrap/+server';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { seedDemo } from '$lib/server/seed/demo';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { ALL_CHECKS, makeModules } from '../factories/modules';
import { actorFor } from '../factories/db';

let db: Db;
let workshop: Actor, dealer: Actor, officer: Actor;
let serials: string[];
const TODAY = '2026-11-25';

const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
async function test(serial: string, at: string, capacityAh: number) {
	const content = `${HEADER}\r\n${serial},${at},${capacityAh},2390,5.1,51.2,8,500,22.5,RIG-2,T.Vale\r\n`;
	const p = await previewImport(
		db,
		workshop,
		{ name: `${serial}-${at}.csv`, content, bytes: 0 },
		new Date('2026-11-30T00:00:00Z')
	);
	await commitImport(db, workshop, p.import.id, new Date('2026-11-30T00:00:00Z'));
}
const stateOf = async (serial: string) =>
	(await db.select({ s: modules.state }).from(modules).where(eq(modules.serial, serial)))[0].s;

function apiEvent(actor: Actor | null, serial: string, body: unknown) {
	return {
		locals: { user: actor },
		url: new URL(`http://localhost/api/modules/${serial}/x`),
		params: { serial },
		request: new Request('http://localhost/', {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: typeof body === 'string' ? body : JSON.stringify(body)
		})
	} as never;
}

beforeAll(async () => {
	// The routes open the database from DATABASE_URL: point it at a throwaway file first.
	process.env.DATABASE_URL = `file:${join(mkdtempSync(join(tmpdir(), 'packledger-workshop-')), 'w.db')}`;
	const { getDb } = await import('$lib/server/db');
	db = await getDb();
	await seedDemo(db, 'test-password-123');
	await seedDemoFleet(db);
	workshop = await actorFor(db, 'workshop@tidewater.example');
	dealer = await actorFor(db, 'dealer@saltmarsh.example');
	officer = await actorFor(db, 'warranty@tidewater.example');
	serials = await makeModules(db, workshop, { count: 5, built: 5, lots: ['HCL-9901-A'] });
	// 44.0 Ah is below the TC-HC-48's 45 Ah minimum: these fail.
	for (const s of serials) await test(s, '2026-11-20T08:00:00Z', 44.0);
}, 120_000);

describe('a failed module: the public record says so first', () => {
	it('is not installable, says "Do not install" and does not promise a warranty', async () => {
		const rec = await getPublicRecord(db, serials[0], TODAY);
		expect(await stateOf(serials[0])).toBe('test_failed');
		expect(rec.installable).toBe(false);
		expect(rec.condition.warning).toBe('Do not install');
		expect(rec.condition.sentence).toMatch(/failed its factory test on 2026-11-20/);
		expect(rec.warranty.state).toBe('none');
		expect(rec.warranty.note).not.toMatch(/starts when the system is commissioned/);
		expect(rec.status).toBe('original');
	});
});

describe('rework, retest, pass', () => {
	it('goes back to built, keeps the failed result, and a passing retest supersedes it', async () => {
		const r = await reworkModule(db, workshop, serials[0], {
			work: 'Replaced cell group 7 and rebalanced the module.'
		});
		expect(r.state).toBe('built');
		expect(await stateOf(serials[0])).toBe('built');
		let rec = await getPublicRecord(db, serials[0], TODAY);
		expect(rec.installable).toBe(false);
		expect(rec.condition.sentence).toMatch(/reworked and is waiting for its retest/);
		// Never in service: still original, not remanufactured.
		expect(rec.status).toBe('original');
		let full = await getModuleRecord(db, workshop, serials[0]);
		expect(full.tests).toHaveLength(1);
		expect(full.tests[0]).toMatchObject({ outcome: 'fail', current: false, capacityAh: 44 });

		await test(serials[0], '2026-11-21T09:00:00Z', 46.9);
		expect(await stateOf(serials[0])).toBe('in_stock');
		rec = await getPublicRecord(db, serials[0], TODAY);
		expect(rec.installable).toBe(true);
		expect(rec.condition.warning).toBeNull();
		full = await getModuleRecord(db, workshop, serials[0]);
		expect(full.tests.map((t) => [t.outcome, t.current, t.capacityAh])).toEqual([
			['pass', true, 46.9],
			['fail', false, 44]
		]);
		expect(full.tests[0]).toMatchObject({ dcirMohm: 5.1, cellSpreadMv: 8, insulationMohm: 500 });
		const kinds = full.events.map((e) => e.kind);
		expect(kinds).toContain('reworked');
		const [a] = await db
			.select({ n: count() })
			.from(auditLog)
			.where(and(eq(auditLog.action, 'module.rework'), eq(auditLog.entityId, serials[0])));
		expect(a.n).toBe(1);
	});

	it('refuses a rework of a module that passed, and a dealer or officer may not rework', async () => {
		await expect(
			reworkModule(db, workshop, serials[0], { work: 'Nothing to do here at all.' })
		).rejects.toMatchObject({ status: 409 });
		await expect(
			reworkModule(db, officer, serials[1], { work: 'Replaced cell group 7.' })
		).rejects.toMatchObject({ status: 403 });
	});
});

describe('scrap', () => {
	it('scraps a failed module with its reason: state scrapped, passport waste, "Do not install"', async () => {
		const r = await scrapModule(db, workshop, serials[1], {
			reason: 'Cell group 3 swollen after the capacity test.'
		});
		expect(r).toMatchObject({ state: 'scrapped', passportStatus: 'waste' });
		const rec = await getPublicRecord(db, serials[1], TODAY);
		expect(rec.status).toBe('waste');
		expect(rec.installable).toBe(false);
		expect(rec.condition.warning).toBe('Do not install');
		expect(rec.condition.sentence).toMatch(/scrapped on \d{4}-\d{2}-\d{2}: Cell group 3 swollen/);
		expect(rec.warranty.state).toBe('none');
	});

	it('refuses to scrap twice, and keeps the module as it was', async () => {
		await expect(
			scrapModule(db, workshop, serials[1], { reason: 'Scrapping it a second time.' })
		).rejects.toMatchObject({ status: 409 });
	});

	it('refuses to scrap a module in service and stores nothing', async () => {
		const [m] = await db.select().from(modules).where(eq(modules.state, 'commissioned')).limit(1);
		const before = await db
			.select({ n: count() })
			.from(moduleEvents)
			.where(eq(moduleEvents.moduleId, m.id));
		await expect(
			scrapModule(db, workshop, m.serial, { reason: 'Someone asked to scrap it.' })
		).rejects.toThrow(/in service: only a module held in the workshop/);
		expect(await stateOf(m.serial)).toBe('commissioned');
		const after = await db
			.select({ n: count() })
			.from(moduleEvents)
			.where(eq(moduleEvents.moduleId, m.id));
		expect(after[0].n).toBe(before[0].n);
	});
});

describe('the API routes keep the pages\u2019 guards and rules', () => {
	it('rework and scrap through the API', async () => {
		let res = await reworkPost(
			apiEvent(workshop, serials[2], { work: 'Re-torqued interconnects.' })
		);
		expect(res.status).toBe(200);
		expect(await res.json()).toMatchObject({ serial: serials[2], state: 'built' });
		res = await scrapPost(apiEvent(workshop, serials[3], { reason: 'Case cracked when dropped.' }));
		expect(res.status).toBe(200);
		expect(await res.json()).toMatchObject({ state: 'scrapped', passportStatus: 'waste' });
	});

	it('answers bad input with the field to fix, and stores nothing', async () => {
		const before = await stateOf(serials[4]);
		let res = await scrapPost(apiEvent(workshop, serials[4], { reason: 'short' }));
		expect(res.status).toBe(400);
		expect((await res.json()).issues[0]).toMatchObject({ path: 'reason' });
		res = await scrapPost(apiEvent(workshop, serials[4], { reason: 'x'.repeat(200_000) }));
		expect(res.status).toBe(400);
		res = await reworkPost(apiEvent(workshop, serials[4], 'not json'));
		expect(res.status).toBe(400);
		res = await reworkPost(
			apiEvent(workshop, 'PL48-26-999999Z', { work: 'Replaced cell group 1.' })
		);
		expect(res.status).toBe(404);
		expect(await stateOf(serials[4])).toBe(before);
	});

	it('refuses a dealer (403) and an anonymous caller (401)', async () => {
		await expect(
			scrapPost(apiEvent(dealer, serials[4], { reason: 'Dealer tries to scrap it.' }))
		).rejects.toMatchObject({ status: 403 });
		await expect(
			reworkPost(apiEvent(null, serials[4], { work: 'Anonymous rework attempt.' }))
		).rejects.toMatchObject({ status: 401 });
	});
});

describe('correcting a wrongly registered build', () => {
	it('changes the lots with a reason, audited with before and after, and traceability follows', async () => {
		await correctBuild(db, workshop, serials[4], {
			cellLots: ['HCL-9902-B'],
			checks: ALL_CHECKS,
			notes: '',
			reason: 'Scanned the wrong lot label at the bench.'
		});
		const [m] = await db.select().from(modules).where(eq(modules.serial, serials[4]));
		expect(JSON.parse(m.cellLots!)).toEqual(['HCL-9902-B']);
		const lots = await db.select().from(moduleCellLots).where(eq(moduleCellLots.moduleId, m.id));
		expect(lots.map((l) => l.lotCode)).toEqual(['HCL-9902-B']);
		const [entry] = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.action, 'module.correct_build'), eq(auditLog.entityId, m.serial)));
		expect(JSON.parse(entry.before!).cellLots).toEqual(['HCL-9901-A']);
		expect(JSON.parse(entry.after!)).toMatchObject({
			cellLots: ['HCL-9902-B'],
			reason: 'Scanned the wrong lot label at the bench.'
		});
		// The original build event stays on the timeline beside the correction.
		const kinds = (
			await db
				.select({ k: moduleEvents.kind })
				.from(moduleEvents)
				.where(eq(moduleEvents.moduleId, m.id))
		).map((e) => e.k);
		expect(kinds).toEqual(expect.arrayContaining(['built', 'build_corrected']));
		const traced = await traceModules(db, { lot: 'HCL-9902-B' } as never);
		expect(traced.items.map((i) => i.serial)).toEqual([m.serial]);
	});

	it('refuses a correction without a reason or of a shipped module', async () => {
		const [shipped] = await db.select().from(modules).where(eq(modules.state, 'shipped')).limit(1);
		await expect(
			correctBuild(db, workshop, shipped.serial, {
				cellLots: ['HCL-9902-B'],
				checks: ALL_CHECKS,
				notes: '',
				reason: 'Trying to correct a shipped one.'
			})
		).rejects.toMatchObject({ status: 409 });
	});
});
