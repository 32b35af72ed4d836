/**
 * Service campaigns through the service (issue 13, item 6): opening over a cell lot, scope
 * per dealer, the steps and their refusals, completion, reminders by mail. A campaign with no
 * modules, acknowledging twice and resolving another dealer's module store nothing.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { count } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { campaigns, campaignSteps, mailOutbox } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { actOnCampaignModule } from '$lib/server/services/campaign-steps';
import { getCampaign, listCampaignModules } from '$lib/server/services/campaigns';
import { openCampaign } from '$lib/server/services/campaign-opening';
import { sendDueReminders } from '$lib/server/services/campaign-reminders';
import { getPublicRecord } from '$lib/server/services/modules';
import { actorFor, createSeededDb } from '../factories/db';

let db: Db;
let officer: Actor, saltmarsh: Actor, ridgeline: Actor;
const T0 = new Date('2026-11-26T09:00:00Z');
const DAY = 86_400_000;
const input = {
	title: 'Interconnect torque check',
	notice: 'Modules with cells of lot HCL-2640-B may have under-torqued interconnects.',
	remedy: 'Check and re-torque the interconnects.',
	reminderDays: 7,
	select: { lot: 'HCL-2640-B' }
};

beforeAll(async () => {
	db = await createSeededDb();
	await seedDemoFleet(db);
	officer = await actorFor(db, 'warranty@tidewater.example');
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	ridgeline = await actorFor(db, 'dealer@ridgeline.example');
}, 120_000);

describe('service campaigns', () => {
	it('refuses a campaign with no modules and stores nothing', async () => {
		await expect(
			openCampaign(db, officer, { ...input, select: { lot: 'NO-SUCH-LOT' } }, T0)
		).rejects.toMatchObject({ status: 400 });
		expect((await db.select({ n: count() }).from(campaigns))[0].n).toBe(0);
		await expect(openCampaign(db, saltmarsh, input, T0)).rejects.toMatchObject({ status: 403 });
	});

	let id = 0;
	it('opens over a lot, reaches both dealers and mails each its own list', async () => {
		const mailsBefore = (await db.select({ n: count() }).from(mailOutbox))[0].n;
		const c = await openCampaign(db, officer, input, T0);
		id = c.id;
		expect(c.modules).toBeGreaterThan(2);
		const view = await getCampaign(db, officer, id);
		expect(view.completionPct).toBe(0);
		expect(view.dealers.map((d) => d.dealer)).toEqual(
			expect.arrayContaining(['Ridgeline Off-Grid Supply', 'Saltmarsh Solar'])
		);
		const mailsAfter = (await db.select({ n: count() }).from(mailOutbox))[0].n;
		expect(mailsAfter - mailsBefore).toBeGreaterThanOrEqual(2);
	});

	it('scopes a dealer to its own modules and counts', async () => {
		const mine = await listCampaignModules(db, saltmarsh, id);
		expect(mine.items.every((i) => i.dealer === 'Saltmarsh Solar')).toBe(true);
		const view = await getCampaign(db, saltmarsh, id);
		expect(view.dealers.map((d) => d.dealer)).toEqual(['Saltmarsh Solar']);
		expect(view.total).toBe(mine.items.length);
	});

	it('refuses acknowledging twice and another dealer\u2019s module, storing nothing', async () => {
		const [first] = (await listCampaignModules(db, saltmarsh, id)).items;
		const [theirs] = (await listCampaignModules(db, ridgeline, id)).items;
		await actOnCampaignModule(db, saltmarsh, id, first.serial, { action: 'acknowledge' }, T0);
		const steps = (await db.select({ n: count() }).from(campaignSteps))[0].n;
		await expect(
			actOnCampaignModule(db, saltmarsh, id, first.serial, { action: 'acknowledge' })
		).rejects.toThrow(/already acknowledged/);
		await expect(
			actOnCampaignModule(db, saltmarsh, id, theirs.serial, {
				action: 'resolve',
				outcome: 'reworked'
			})
		).rejects.toMatchObject({ status: 404 });
		await expect(
			actOnCampaignModule(db, saltmarsh, id, first.serial, { action: 'resolve' })
		).rejects.toMatchObject({ status: 400 });
		expect((await db.select({ n: count() }).from(campaignSteps))[0].n).toBe(steps);
	});

	it('shows the open campaign on the public record until the module is resolved', async () => {
		const [first] = (await listCampaignModules(db, saltmarsh, id)).items;
		let rec = await getPublicRecord(db, first.serial, '2026-11-26');
		expect(rec.campaign?.title).toBe('Interconnect torque check');
		expect(rec.condition.sentence).toMatch(/^Service campaign SC-2026-001/);
		await actOnCampaignModule(
			db,
			saltmarsh,
			id,
			first.serial,
			{ action: 'resolve', outcome: 'reworked' },
			T0
		);
		rec = await getPublicRecord(db, first.serial, '2026-11-26');
		expect(rec.campaign).toBeNull();
	});

	it('reminds dealers with waiting modules after the set days, once per period', async () => {
		expect(
			(await sendDueReminders(db, officer, new Date(T0.getTime() + 7 * DAY - 1))).modules
		).toBe(0);
		const due = await sendDueReminders(db, officer, new Date(T0.getTime() + 7 * DAY));
		expect(due.dealers).toBe(2);
		expect(due.modules).toBeGreaterThan(0);
		expect((await sendDueReminders(db, officer, new Date(T0.getTime() + 8 * DAY))).modules).toBe(0);
	});

	it('reaches 100 % when every module is resolved', async () => {
		for (const actor of [saltmarsh, ridgeline, officer])
			for (const m of (await listCampaignModules(db, actor, id)).items)
				if (m.state !== 'resolved')
					await actOnCampaignModule(db, actor, id, m.serial, {
						action: 'resolve',
						outcome: 'inspected_ok'
					});
		expect((await getCampaign(db, officer, id)).completionPct).toBe(100);
	});
});
