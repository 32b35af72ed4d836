import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { auditLog, modules, organisations } from '$lib/server/db/schema';
import {
	createDealer,
	getDealer,
	listActiveDealers,
	listDealers,
	setDealerActive,
	updateDealer
} from '$lib/server/services/dealers';
import { addRangeToShipment } from '$lib/server/services/shipment-packing';
import { createShipment } from '$lib/server/services/shipments';
import { dispatchShipment } from '$lib/server/services/shipment-dispatch';
import { dealerSchema } from '$lib/schemas/dealer';
import { closeMailer } from '$lib/server/mail';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';

let db: Db;
let admin: Actor;
let workshop: Actor;

const auditOf = (id: number) =>
	db
		.select()
		.from(auditLog)
		.where(and(eq(auditLog.entity, 'organisation'), eq(auditLog.entityId, String(id))));

beforeAll(async () => {
	db = await createSeededDb();
	admin = await actorFor(db, 'admin@tidewater.example');
	workshop = await actorFor(db, 'workshop@tidewater.example');
});
afterAll(async () => closeMailer(db));

describe('dealer list', () => {
	it('shows each dealer with its people and the modules it has received', async () => {
		const serials = await makeModules(db, workshop, { count: 3, built: 3 });
		await db
			.update(modules)
			.set({ state: 'in_stock', testOutcome: 'pass' })
			.where(inArray(modules.serial, serials));
		const [ridgeline] = await db
			.select()
			.from(organisations)
			.where(eq(organisations.name, 'Ridgeline Off-Grid Supply'));
		const sh = await createShipment(db, workshop, { dealerOrgId: ridgeline.id });
		await addRangeToShipment(db, workshop, sh.id, serials[0], serials[2]);
		await dispatchShipment(db, workshop, sh.id);

		const list = await listDealers(db);
		expect(list.map((d) => d.name)).toEqual([
			'Northbank Electrical',
			'Ridgeline Off-Grid Supply',
			'Saltmarsh Solar'
		]);
		expect(list.find((d) => d.name === 'Ridgeline Off-Grid Supply')).toMatchObject({
			modulesShipped: 3,
			userCount: 2,
			active: true
		});
		expect(list.find((d) => d.name === 'Saltmarsh Solar')).toMatchObject({
			modulesShipped: 0,
			userCount: 1
		});

		const one = await getDealer(db, ridgeline.id);
		expect(one.users.map((u) => u.email).sort()).toEqual([
			'dealer@ridgeline.example',
			'tech@ridgeline.example'
		]);
		expect(one.modulesShipped).toBe(3);
	});

	it('does not treat the assembler as a dealer', async () => {
		const [assembler] = await db
			.select()
			.from(organisations)
			.where(eq(organisations.kind, 'assembler'));
		await expect(getDealer(db, assembler.id)).rejects.toThrow(/no dealer/);
	});
});

describe('creating and editing dealers', () => {
	it('creates a dealer with an audit entry', async () => {
		const id = await createDealer(db, admin, {
			name: 'Kelpwater Power',
			contactEmail: 'orders@kelpwater.example',
			region: 'Kelp bay'
		});
		const { dealer } = await getDealer(db, id);
		expect(dealer).toMatchObject({
			kind: 'dealer',
			name: 'Kelpwater Power',
			contactEmail: 'orders@kelpwater.example',
			region: 'Kelp bay',
			active: true
		});
		const audit = await auditOf(id);
		expect(audit.map((a) => a.action)).toEqual(['dealer.create']);
		expect(JSON.parse(audit[0].after!)).toMatchObject({ name: 'Kelpwater Power' });
	});

	it('refuses a name already taken by any organisation, ignoring case', async () => {
		await expect(
			createDealer(db, admin, { name: 'saltmarsh solar', contactEmail: 'x@y.example' })
		).rejects.toThrow(/Saltmarsh Solar already exists/);
		await expect(
			createDealer(db, admin, { name: 'Tidewater Cellworks', contactEmail: 'x@y.example' })
		).rejects.toThrow(/already exists/);
		const id = await createDealer(db, admin, {
			name: 'Harbourline Batteries',
			contactEmail: 'hello@harbourline.example'
		});
		await expect(
			updateDealer(db, admin, id, {
				name: 'Northbank Electrical',
				contactEmail: 'hello@harbourline.example'
			})
		).rejects.toThrow(/Northbank Electrical already exists/);
		expect((await getDealer(db, id)).dealer.name).toBe('Harbourline Batteries');
	});

	it('updates name, contact address and region, keeping before and after in the audit log', async () => {
		const id = await createDealer(db, admin, {
			name: 'Driftwood Energy',
			contactEmail: 'old@driftwood.example'
		});
		await updateDealer(db, admin, id, {
			name: 'Driftwood Energy',
			contactEmail: 'shipping@driftwood.example',
			region: 'Outer isles'
		});
		expect((await getDealer(db, id)).dealer).toMatchObject({
			contactEmail: 'shipping@driftwood.example',
			region: 'Outer isles'
		});
		const [entry] = (await auditOf(id)).filter((a) => a.action === 'dealer.update');
		expect(JSON.parse(entry.before!)).toMatchObject({
			contactEmail: 'old@driftwood.example',
			region: null
		});
		expect(JSON.parse(entry.after!)).toMatchObject({
			contactEmail: 'shipping@driftwood.example',
			region: 'Outer isles'
		});
	});

	it('deactivates a dealer so it gets no new shipments, and reactivates it', async () => {
		const id = await createDealer(db, admin, {
			name: 'Shingle Point Solar',
			contactEmail: 'desk@shingle.example'
		});
		await setDealerActive(db, admin, id, false);
		expect((await listActiveDealers(db)).map((d) => d.id)).not.toContain(id);
		await expect(createShipment(db, workshop, { dealerOrgId: id })).rejects.toThrow(
			/Shingle Point Solar is deactivated/
		);
		await setDealerActive(db, admin, id, false);
		await setDealerActive(db, admin, id, true);
		expect((await listActiveDealers(db)).map((d) => d.id)).toContain(id);
		expect((await createShipment(db, workshop, { dealerOrgId: id })).status).toBe('draft');
		expect((await auditOf(id)).map((a) => a.action)).toEqual([
			'dealer.create',
			'dealer.deactivate',
			'dealer.activate'
		]);
	});
});

describe('dealer form input', () => {
	it('needs a name and a contact address; a blank region is none', () => {
		const ok = dealerSchema.safeParse({
			name: ' Tern Bay Solar ',
			contactEmail: 'Sales@TernBay.example',
			region: '  '
		});
		expect(ok.success && ok.data).toEqual({
			name: 'Tern Bay Solar',
			contactEmail: 'sales@ternbay.example',
			region: undefined
		});
		const bad = dealerSchema.safeParse({ name: '', contactEmail: 'not-an-address' });
		expect(bad.success).toBe(false);
		expect(bad.error?.issues.map((i) => i.path.join('.')).sort()).toEqual(['contactEmail', 'name']);
	});
});
