import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	auditLog,
	mailOutbox,
	moduleEvents,
	moduleModels,
	modules,
	organisations,
	shipments
} from '$lib/server/db/schema';
import {
	addRangeToShipment,
	addToShipment,
	removeFromShipment
} from '$lib/server/services/shipment-packing';
import {
	createShipment,
	deleteDraftShipment,
	getShipment,
	listShipments,
	updateShipmentNote
} from '$lib/server/services/shipments';
import { dispatchShipment } from '$lib/server/services/shipment-dispatch';
import { setDealerActive } from '$lib/server/services/dealers';
import { closeMailer } from '$lib/server/mail';
import { buildDigitalLink } from '$lib/domain/gs1';
import { parseSerial, serialRun } from '$lib/domain/serial';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';

const BASE = 'https://register.tidewater.example';
let db: Db;
let workshop: Actor;
let admin: Actor;
let dealerUser: Actor;
const dealerId: Record<string, number> = {};

/** Marks modules as passed their factory test, as a committed import would. */
async function passTest(serials: string[]) {
	await db
		.update(modules)
		.set({ state: 'in_stock', testOutcome: 'pass', testedAt: new Date() })
		.where(inArray(modules.serial, serials));
}

/** Built modules that passed their test, ready to ship. */
async function stock(count = 3) {
	const serials = await makeModules(db, workshop, { count, built: count });
	await passTest(serials);
	return serials;
}

const draftTo = (dealer: string, now?: Date) =>
	createShipment(db, workshop, { dealerOrgId: dealerId[dealer] }, now);

beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	admin = await actorFor(db, 'admin@tidewater.example');
	dealerUser = await actorFor(db, 'dealer@saltmarsh.example');
	for (const o of await db.select().from(organisations)) dealerId[o.name] = o.id;
});
afterAll(async () => closeMailer(db));

describe('shipment references', () => {
	it('are SH-{year}-{NNNN}, sequential per year and restart in a new year', async () => {
		const a = await draftTo('Saltmarsh Solar', new Date('2027-03-01T10:00:00Z'));
		const b = await draftTo('Northbank Electrical', new Date('2027-05-01T10:00:00Z'));
		const c = await draftTo('Saltmarsh Solar', new Date('2028-01-02T10:00:00Z'));
		expect([a.reference, b.reference, c.reference]).toEqual([
			'SH-2027-0001',
			'SH-2027-0002',
			'SH-2028-0001'
		]);
		expect(a.status).toBe('draft');
	});

	it('stay unique and consecutive when many shipments are started at once', async () => {
		const now = new Date('2031-06-01T08:00:00Z');
		const made = await Promise.all(
			Array.from({ length: 12 }, (_, i) =>
				createShipment(
					db,
					i % 2 ? admin : workshop,
					{ dealerOrgId: dealerId['Saltmarsh Solar'] },
					now
				)
			)
		);
		const refs = made.map((s) => s.reference).sort();
		expect(refs).toEqual(
			Array.from({ length: 12 }, (_, i) => `SH-2031-${String(i + 1).padStart(4, '0')}`)
		);
	});

	it('refuse a deactivated dealer and organisations that are not dealers', async () => {
		await setDealerActive(db, admin, dealerId['Northbank Electrical'], false);
		await expect(draftTo('Northbank Electrical')).rejects.toThrow(
			/Northbank Electrical is deactivated/
		);
		await setDealerActive(db, admin, dealerId['Northbank Electrical'], true);
		await expect(draftTo('Tidewater Cellworks')).rejects.toThrow(/dealer does not exist/);
	});

	it('are not for dealers', async () => {
		await expect(
			createShipment(db, dealerUser, { dealerOrgId: dealerId['Saltmarsh Solar'] })
		).rejects.toThrow(/workshop/);
	});
});

describe('adding modules by scan', () => {
	it('accepts a bare serial, the label URL and a Digital Link; the same serial twice changes nothing', async () => {
		const [s1, s2, s3] = await stock(3);
		const sh = await draftTo('Saltmarsh Solar');
		expect(await addToShipment(db, workshop, sh.id, s1.toLowerCase(), BASE)).toMatchObject({
			outcome: 'added',
			serial: s1,
			count: 1
		});
		expect(await addToShipment(db, workshop, sh.id, `${BASE}/m/${s2}`, BASE)).toMatchObject({
			outcome: 'added',
			serial: s2,
			count: 2
		});
		const [model] = await db.select().from(moduleModels).where(eq(moduleModels.code, 'TC-HC-48'));
		expect(
			await addToShipment(db, workshop, sh.id, buildDigitalLink(BASE, model.gtin!, s3), BASE)
		).toMatchObject({ outcome: 'added', serial: s3 });
		const again = await addToShipment(db, workshop, sh.id, s1, BASE);
		expect(again.outcome).toBe('already');
		expect(again.message).toMatch(
			new RegExp(`${s1} is already on ${sh.reference}; nothing changed`)
		);
		expect((await getShipment(db, workshop, sh.id)).items.map((i) => i.serial)).toEqual([
			s1,
			s2,
			s3
		]);
	});

	it('explains each refusal with the module’s current state', async () => {
		const [built, failed, onDraft, shipped, labelled] = await makeModules(db, workshop, {
			count: 5,
			built: 4
		});
		await db
			.update(modules)
			.set({ state: 'test_failed', testOutcome: 'fail' })
			.where(eq(modules.serial, failed));
		await passTest([onDraft, shipped]);
		const other = await draftTo('Saltmarsh Solar');
		await addToShipment(db, workshop, other.id, onDraft, BASE);
		const toRidgeline = await draftTo('Ridgeline Off-Grid Supply');
		await addToShipment(db, workshop, toRidgeline.id, shipped, BASE);
		await dispatchShipment(db, workshop, toRidgeline.id, new Date('2026-03-04T09:00:00Z'));

		const sh = await draftTo('Northbank Electrical');
		const add = (serial: string) => addToShipment(db, workshop, sh.id, serial, BASE);
		await expect(add(labelled)).rejects.toThrow(
			`${labelled} has a label but is not built yet; only passed modules in stock can ship.`
		);
		await expect(add(built)).rejects.toThrow(
			`${built} is built but not tested yet; only passed modules in stock can ship.`
		);
		await expect(add(failed)).rejects.toThrow(
			`${failed} failed its factory test; only passed modules in stock can ship.`
		);
		await expect(add(onDraft)).rejects.toThrow(
			`${onDraft} is already on draft ${other.reference}.`
		);
		await expect(add(shipped)).rejects.toThrow(
			`${shipped} was shipped to Ridgeline Off-Grid Supply on 2026-03-04 (${toRidgeline.reference}).`
		);
		const p = parseSerial(labelled) as { variant: string; number: number };
		const unknown = serialRun(p.variant, new Date().getUTCFullYear(), 999_000, 1)[0];
		await expect(add(unknown)).rejects.toThrow(/is in the register|No module/);
		const mistyped = labelled.slice(0, -1) + (labelled.endsWith('A') ? 'B' : 'A');
		await expect(add(mistyped)).rejects.toThrow(/check character does not match/);
		expect((await getShipment(db, workshop, sh.id)).items).toHaveLength(0);
	});
});

describe('adding a range', () => {
	it('adds the modules that can ship and lists the others with reasons', async () => {
		const serials = await makeModules(db, workshop, { count: 6, built: 5 });
		await passTest(serials.slice(0, 4));
		const other = await draftTo('Ridgeline Off-Grid Supply');
		await addToShipment(db, workshop, other.id, serials[2], BASE);
		const sh = await draftTo('Saltmarsh Solar');
		await addToShipment(db, workshop, sh.id, serials[0], BASE);

		const r = await addRangeToShipment(db, workshop, sh.id, serials[0], serials[5]);
		expect(r.added).toEqual([serials[1], serials[3]]);
		expect(r.already).toEqual([serials[0]]);
		expect(r.refused).toEqual([
			{ serial: serials[2], reason: `${serials[2]} is already on draft ${other.reference}` },
			{
				serial: serials[4],
				reason: `${serials[4]} is built but not tested yet; only passed modules in stock can ship`
			},
			{
				serial: serials[5],
				reason: `${serials[5]} has a label but is not built yet; only passed modules in stock can ship`
			}
		]);
		expect(r.count).toBe(3);
	});

	it('accepts the ends in either order and refuses mixed variants, mixed years and more than 500', async () => {
		const serials = await stock(2);
		const sh = await draftTo('Saltmarsh Solar');
		expect((await addRangeToShipment(db, workshop, sh.id, serials[1], serials[0])).added).toEqual(
			serials
		);
		const [v12] = await makeModules(db, workshop, { code: 'TC-HC-12', count: 1 });
		await expect(addRangeToShipment(db, workshop, sh.id, serials[0], v12)).rejects.toThrow(
			/one variant and year/
		);
		const p = parseSerial(serials[0]) as { variant: string; number: number; year2: number };
		const nextYear = serialRun(p.variant, 2000 + p.year2 + 1, p.number, 1)[0];
		await expect(addRangeToShipment(db, workshop, sh.id, serials[0], nextYear)).rejects.toThrow(
			/one variant and year/
		);
		const far = serialRun(p.variant, 2000 + p.year2, p.number + 500, 1)[0];
		await expect(addRangeToShipment(db, workshop, sh.id, serials[0], far)).rejects.toThrow(
			/501 serials; add at most 500/
		);
		await expect(addRangeToShipment(db, workshop, sh.id, 'PL48-26-12', serials[0])).rejects.toThrow(
			/first serial/
		);
	});
});

describe('dispatch', () => {
	it('ships every module to the dealer with an event each, and e-mails the dealer the serial list', async () => {
		const serials = await stock(4);
		const sh = await draftTo('Saltmarsh Solar');
		await addRangeToShipment(db, workshop, sh.id, serials[0], serials[3]);
		await updateShipmentNote(db, workshop, sh.id, 'Two pallets, strapped.');
		const now = new Date('2026-04-15T13:30:00Z');
		const result = await dispatchShipment(db, workshop, sh.id, now);
		expect(result.mail).toEqual({ to: ['dealer@saltmarsh.example'], error: null });

		const rows = await db.select().from(modules).where(inArray(modules.serial, serials));
		for (const m of rows) {
			expect(m.state).toBe('shipped');
			expect(m.dealerOrgId).toBe(dealerId['Saltmarsh Solar']);
			expect(m.shippedAt?.toISOString()).toBe(now.toISOString());
		}
		const events = await db
			.select()
			.from(moduleEvents)
			.where(
				and(
					inArray(
						moduleEvents.moduleId,
						rows.map((m) => m.id)
					),
					eq(moduleEvents.kind, 'shipped')
				)
			);
		expect(events).toHaveLength(4);
		expect(new Set(events.map((e) => e.summary))).toEqual(
			new Set([`Shipped to Saltmarsh Solar on ${sh.reference}`])
		);

		const [after] = await db.select().from(shipments).where(eq(shipments.id, sh.id));
		expect(after).toMatchObject({ status: 'dispatched', dispatchedBy: workshop.userId });
		const audit = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.entity, 'shipment'), eq(auditLog.entityId, sh.reference)));
		expect(audit.map((a) => a.action)).toEqual(
			expect.arrayContaining([
				'shipment.create',
				'shipment.add',
				'shipment.note',
				'shipment.dispatch'
			])
		);

		const mails = await db
			.select()
			.from(mailOutbox)
			.where(
				eq(mailOutbox.subject, `Shipment ${sh.reference} from Tidewater Cellworks: 4 modules`)
			);
		expect(mails).toHaveLength(1);
		expect(mails[0].toAddr).toContain('dealer@saltmarsh.example');
		for (const s of serials) expect(mails[0].text).toMatch(new RegExp(`${s}\\s+TC-HC-48`));
		expect(mails[0].text).toContain('Two pallets, strapped.');

		const listed = (await listShipments(db, workshop)).find((x) => x.id === sh.id);
		expect(listed).toMatchObject({ status: 'dispatched', dealerName: 'Saltmarsh Solar', count: 4 });
	});

	it('writes to the contact address and active dealer users only, not the dealer’s technicians', async () => {
		const [s] = await stock(1);
		const sh = await draftTo('Ridgeline Off-Grid Supply');
		await addToShipment(db, workshop, sh.id, s, BASE);
		const { mail } = await dispatchShipment(db, admin, sh.id);
		expect(mail.to).toEqual(['dealer@ridgeline.example']);
		const [m] = await db
			.select()
			.from(mailOutbox)
			.where(eq(mailOutbox.subject, `Shipment ${sh.reference} from Tidewater Cellworks: 1 module`));
		expect(m.toAddr).not.toContain('tech@ridgeline.example');
	});

	it('refuses every change after dispatch, saying when it left', async () => {
		const [a, b] = await stock(2);
		const sh = await draftTo('Saltmarsh Solar');
		await addToShipment(db, workshop, sh.id, a, BASE);
		await dispatchShipment(db, workshop, sh.id, new Date('2026-05-02T08:00:00Z'));
		const refused = `${sh.reference} was dispatched on 2026-05-02; a return is recorded on the module instead.`;
		await expect(addToShipment(db, workshop, sh.id, b, BASE)).rejects.toThrow(refused);
		await expect(addRangeToShipment(db, workshop, sh.id, b, b)).rejects.toThrow(refused);
		await expect(removeFromShipment(db, workshop, sh.id, a)).rejects.toThrow(refused);
		await expect(updateShipmentNote(db, workshop, sh.id, 'late note')).rejects.toThrow(refused);
		await expect(deleteDraftShipment(db, admin, sh.id)).rejects.toThrow(refused);
		await expect(dispatchShipment(db, workshop, sh.id)).rejects.toThrow(refused);
		expect((await getShipment(db, workshop, sh.id)).items.map((i) => i.serial)).toEqual([a]);
	});

	it('refuses an empty shipment and a deactivated dealer, changing nothing', async () => {
		const empty = await draftTo('Northbank Electrical');
		await expect(dispatchShipment(db, workshop, empty.id)).rejects.toThrow(
			/has no modules on it yet/
		);

		const [s] = await stock(1);
		const sh = await draftTo('Northbank Electrical');
		await addToShipment(db, workshop, sh.id, s, BASE);
		await setDealerActive(db, admin, dealerId['Northbank Electrical'], false);
		await expect(dispatchShipment(db, workshop, sh.id)).rejects.toThrow(
			/Northbank Electrical is deactivated and cannot receive shipments/
		);
		await setDealerActive(db, admin, dealerId['Northbank Electrical'], true);
		const [m] = await db.select().from(modules).where(eq(modules.serial, s));
		expect(m).toMatchObject({ state: 'in_stock', dealerOrgId: null });
		expect((await getShipment(db, workshop, sh.id)).shipment.status).toBe('draft');
	});

	it('checks every module again: one that failed a re-test since it was added stops the dispatch', async () => {
		const [ok, retested] = await stock(2);
		const sh = await draftTo('Saltmarsh Solar');
		await addRangeToShipment(db, workshop, sh.id, ok, retested);
		await db
			.update(modules)
			.set({ state: 'test_failed', testOutcome: 'fail' })
			.where(eq(modules.serial, retested));
		await expect(dispatchShipment(db, workshop, sh.id)).rejects.toThrow(
			`${retested} failed its factory test`
		);
		const rows = await db
			.select()
			.from(modules)
			.where(inArray(modules.serial, [ok, retested]));
		expect(rows.map((r) => r.state).sort()).toEqual(['in_stock', 'test_failed']);
		const events = await db
			.select()
			.from(moduleEvents)
			.where(
				and(
					inArray(
						moduleEvents.moduleId,
						rows.map((r) => r.id)
					),
					eq(moduleEvents.kind, 'shipped')
				)
			);
		expect(events).toHaveLength(0);
	});
});

describe('drafts', () => {
	it('can lose a module, change its note and be deleted, freeing its modules for another draft', async () => {
		const [a, b] = await stock(2);
		const sh = await draftTo('Saltmarsh Solar');
		await addRangeToShipment(db, workshop, sh.id, a, b);
		expect(await removeFromShipment(db, workshop, sh.id, a)).toEqual({ serial: a, count: 1 });
		await expect(removeFromShipment(db, workshop, sh.id, a)).rejects.toThrow(
			`${a} is not on ${sh.reference}.`
		);
		expect(await updateShipmentNote(db, workshop, sh.id, '  ')).toEqual({ note: null });
		await deleteDraftShipment(db, workshop, sh.id);
		await expect(getShipment(db, workshop, sh.id)).rejects.toThrow(/no shipment/);
		const next = await draftTo('Ridgeline Off-Grid Supply');
		expect((await addToShipment(db, workshop, next.id, b, BASE)).outcome).toBe('added');
	});
});

// The demo assembler keeps Etc/GMT-10: ten hours ahead of UTC all year (IANA tz database,
// file "etcetera": the Etc/GMT sign is inverted, so GMT-10 is UTC+10). Local midnight is
// therefore 14:00:00 UTC the day before; the days below are worked out by hand from that.
describe('dispatch dates on the assembler’s calendar (Etc/GMT-10), either side of midnight', () => {
	const mailOf = async (reference: string) =>
		(await db.select().from(mailOutbox)).find((m) =>
			m.subject.startsWith(`Shipment ${reference} `)
		)!;

	async function dispatchedAt(at: Date) {
		const [serial] = await stock(1);
		const sh = await draftTo('Saltmarsh Solar', at);
		await addToShipment(db, workshop, sh.id, serial, BASE);
		await dispatchShipment(db, workshop, sh.id, at);
		return { sh, serial };
	}

	for (const [at, day] of [
		['2026-11-30T13:59:59Z', '2026-11-30'], // 23:59:59 on 30 November there
		['2026-11-30T14:00:00Z', '2026-12-01'], // 00:00:00 on 1 December there
		['2028-02-28T14:00:00Z', '2028-02-29'], // the leap day begins
		['2028-02-29T13:59:59Z', '2028-02-29'], // its last second
		['2028-02-29T14:00:00Z', '2028-03-01'] // and the day after it
	] as const)
		it(`dates a dispatch at ${at} as ${day}: the dealer’s e-mail, the refusal after it, and a module’s refusal`, async () => {
			const { sh, serial } = await dispatchedAt(new Date(at));
			expect((await mailOf(sh.reference)).text).toContain(
				`dispatched shipment ${sh.reference} to you on ${day} with 1 module`
			);
			const [other] = await stock(1);
			await expect(addToShipment(db, workshop, sh.id, other, BASE)).rejects.toThrow(
				`${sh.reference} was dispatched on ${day}; a return is recorded on the module instead.`
			);
			const next = await draftTo('Northbank Electrical');
			await expect(addToShipment(db, workshop, next.id, serial, BASE)).rejects.toThrow(
				`${serial} was shipped to Saltmarsh Solar on ${day} (${sh.reference}).`
			);
		});

	it('numbers a shipment started in the last second of the local year with that year, the next with the new one', async () => {
		const last = await draftTo('Saltmarsh Solar', new Date('2026-12-31T13:59:59Z'));
		const first = await draftTo('Saltmarsh Solar', new Date('2026-12-31T14:00:00Z'));
		expect(last.reference).toMatch(/^SH-2026-\d{4}$/);
		expect(first.reference).toMatch(/^SH-2027-\d{4}$/);
	});
});
