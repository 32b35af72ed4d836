import { beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	auditLog,
	moduleEvents,
	modules,
	organisations,
	sites,
	systems,
	systemSlots
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { createSite, getSite, listSites } from '$lib/server/services/sites';
import { createSystem, designCheck, getSystem } from '$lib/server/services/systems';
import { nextEmptySlot } from '$lib/domain/system-slots';
import { placeModule, removeModule } from '$lib/server/services/system-modules';
import {
	designCheckRequestSchema,
	siteSchema,
	systemSchema,
	type SiteInput,
	type SystemInput
} from '$lib/schemas/site';
import {
	ConflictError,
	ForbiddenError,
	InvalidInputError,
	NotFoundError
} from '$lib/server/errors';
import { actorFor, createSeededDb } from '../factories/db';
import { assignToDealer, makeModules } from '../factories/modules';

let db: Db;
let admin: Actor, workshop: Actor, tideTech: Actor, ridgeTech: Actor, saltDealer: Actor;
let saltmarsh: number, ridgeline: number, assembler: number;

const site = (over: Partial<SiteInput> = {}): SiteInput => ({
	name: 'Willow Lane farm',
	ownerName: 'Edda Marsh',
	ownerContact: 'edda@example.org',
	address: '4 Willow Lane, Saltmarsh coast',
	application: 'off_grid_home',
	dealerOrgId: null,
	...over
});
// 2 × TC-HC-48 (22 cells each): 44 × 1.8 / 2.35 / 2.75 V = 79.2 / 103.4 / 121.0 V.
const system = (over: Partial<SystemInput> = {}): SystemInput => ({
	name: 'Shed north',
	modelCode: 'TC-HC-48',
	series: 2,
	parallel: 2,
	inverterName: 'Invented 10 kW hybrid',
	inverterMinV: 70,
	inverterMaxV: 125,
	...over
});
const stateOf = async (serial: string) =>
	(await db.select().from(modules).where(eq(modules.serial, serial)))[0];

beforeAll(async () => {
	db = await createSeededDb();
	[admin, workshop, tideTech, ridgeTech, saltDealer] = await Promise.all(
		[
			'admin@tidewater.example',
			'workshop@tidewater.example',
			'tech@tidewater.example',
			'tech@ridgeline.example',
			'dealer@saltmarsh.example'
		].map((e) => actorFor(db, e))
	);
	const orgs = await db.select().from(organisations);
	const id = (name: string) => orgs.find((o) => o.name === name)!.id;
	[saltmarsh, ridgeline, assembler] = [
		id('Saltmarsh Solar'),
		id('Ridgeline Off-Grid Supply'),
		id('Tidewater Cellworks')
	];
});

describe('site scope', () => {
	it('hides a Saltmarsh site from Ridgeline exactly like a missing one, and shows it with owner data to Saltmarsh', async () => {
		const id = await createSite(db, tideTech, site({ dealerOrgId: saltmarsh }));
		const missing = await getSite(db, ridgeTech, 999_999).catch((e) => e);
		const hidden = await getSite(db, ridgeTech, id).catch((e) => e);
		expect(missing).toBeInstanceOf(NotFoundError);
		expect(hidden).toBeInstanceOf(NotFoundError);
		expect(hidden.message).toBe(missing.message.replace('999999', String(id)));
		expect((await listSites(db, ridgeTech)).map((s) => s.id)).not.toContain(id);

		const seen = await getSite(db, saltDealer, id);
		expect(seen.site.dealerName).toBe('Saltmarsh Solar');
		expect(seen.owner).toEqual({
			name: 'Edda Marsh',
			contact: 'edda@example.org',
			address: '4 Willow Lane, Saltmarsh coast'
		});
		const listed = (await listSites(db, saltDealer)).find((s) => s.id === id)!;
		expect(listed).toMatchObject({
			systemCount: 0,
			status: 'no_systems',
			owner: { name: 'Edda Marsh' }
		});
		expect((await listSites(db, admin)).map((s) => s.id)).toContain(id);
	});

	it('files a dealer technician’s site under their own organisation, whatever the form says', async () => {
		const id = await createSite(db, ridgeTech, site({ name: 'Ridge hut', dealerOrgId: saltmarsh }));
		const [row] = await db.select().from(sites).where(eq(sites.id, id));
		expect(row.dealerOrgId).toBe(ridgeline);
		const audit = await db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.entity, 'site'), eq(auditLog.entityId, String(id))));
		expect(audit[0].action).toBe('site.create');
		// Personal data stays out of the append-only log.
		expect(audit[0].after).not.toContain('Edda');
	});

	it('lets assembler staff choose no dealer (own installation) but not a non-dealer organisation; dealers only view', async () => {
		const own = await createSite(db, admin, site({ name: 'Port Halden yard' }));
		expect((await db.select().from(sites).where(eq(sites.id, own)))[0].dealerOrgId).toBeNull();
		await expect(createSite(db, admin, site({ dealerOrgId: assembler }))).rejects.toBeInstanceOf(
			InvalidInputError
		);
		await expect(createSite(db, saltDealer, site())).rejects.toBeInstanceOf(ForbiddenError);
	});

	it('refuses an owner contact that is neither a phone number nor an e-mail address', () => {
		const form = {
			name: 'A site',
			ownerName: 'Edda Marsh',
			address: '4 Willow Lane',
			application: 'backup',
			dealerOrgId: ''
		};
		expect(siteSchema.safeParse({ ...form, ownerContact: '0400 123 456' }).success).toBe(true);
		const bad = siteSchema.safeParse({ ...form, ownerContact: 'call the farm' });
		expect(bad.success).toBe(false);
		expect(bad.error!.issues[0].path).toEqual(['ownerContact']);
	});
});

describe('system design on creation', () => {
	it('refuses a design whose string leaves the inverter window, naming the problem, and stores nothing', async () => {
		const siteId = await createSite(db, tideTech, site({ dealerOrgId: saltmarsh }));
		// 3 × TC-HC-48: 66 × 2.75 V = 181.5 V, above a 125 V maximum.
		const err = await createSystem(db, tideTech, siteId, system({ series: 3 })).catch((e) => e);
		expect(err).toBeInstanceOf(InvalidInputError);
		expect(err.issues.map((i: { message: string }) => i.message).join(' ')).toContain(
			"String maximum 181.5 V is above the inverter's 125.0 V DC maximum"
		);
		expect(await db.select().from(systems).where(eq(systems.siteId, siteId))).toHaveLength(0);
	});

	it('stores a design outside only the preferred range, with the caution as a warning', async () => {
		const siteId = await createSite(db, tideTech, site({ dealerOrgId: saltmarsh }));
		const { id, warnings } = await createSystem(
			db,
			tideTech,
			siteId,
			system({ preferredMinV: 80, preferredMaxV: 120 })
		);
		expect(warnings.join(' ')).toMatch(
			/fits the inverter's DC window but not its preferred 80\.0 V to 120\.0 V/
		);
		const view = await getSystem(db, tideTech, id);
		expect(view.design.fitsWindow).toBe(true);
		expect(view.design.stringVoltage).toEqual({ min: 79.2, nominal: 103.4, max: 121 });
		expect(view.strings.map((s) => s.slots.length)).toEqual([2, 2]);
		expect(view.next).toEqual({ stringNo: 1, position: 1 });
		expect(view.readyToCommission).toBe(false);
	});

	it('reads form text and refuses a window the wrong way round', () => {
		const ok = systemSchema.safeParse({
			...system(),
			series: '2',
			parallel: '2',
			inverterMinV: '70',
			inverterMaxV: '125,5',
			preferredMinV: ''
		});
		expect(ok.success && ok.data.inverterMaxV).toBe(125.5);
		const bad = systemSchema.safeParse({ ...system(), inverterMinV: '130' });
		expect(bad.error?.issues.map((i) => i.path.join('.'))).toContain('inverterMinV');
	});
});

describe('placing modules', () => {
	let siteId: number, systemId: number, ownSystemId: number;
	beforeAll(async () => {
		siteId = await createSite(db, tideTech, site({ name: 'Willow Lane', dealerOrgId: saltmarsh }));
		systemId = (await createSystem(db, tideTech, siteId, system())).id;
		const ownSite = await createSite(db, admin, site({ name: 'Port Halden yard' }));
		ownSystemId = (await createSystem(db, admin, ownSite, system({ name: 'Yard rack' }))).id;
	});

	it('places a module shipped to the site’s dealer in the next empty slot: state, slot, event and audit', async () => {
		const serials = await makeModules(db, workshop, { count: 2, built: 2 });
		await assignToDealer(db, serials, 'Saltmarsh Solar');
		const first = await placeModule(db, tideTech, systemId, null, serials[0]);
		expect(first).toMatchObject({
			serial: serials[0],
			stringNo: 1,
			position: 1,
			filled: 1,
			total: 4
		});
		const second = await placeModule(
			db,
			tideTech,
			systemId,
			{ stringNo: 2, position: 2 },
			`https://packledger.example/m/${serials[1]}`,
			'https://packledger.example'
		);
		expect(second).toMatchObject({ stringNo: 2, position: 2 });

		const mod = await stateOf(serials[0]);
		expect(mod).toMatchObject({ state: 'installed', systemId });
		const slots = await db.select().from(systemSlots).where(eq(systemSlots.systemId, systemId));
		expect(slots).toHaveLength(2);
		const events = await db.select().from(moduleEvents).where(eq(moduleEvents.moduleId, mod.id));
		expect(events.find((e) => e.kind === 'installed')?.summary).toBe(
			'Installed in Shed north at Willow Lane, string 1 position 1'
		);
		const audit = await db.select().from(auditLog).where(eq(auditLog.entityId, serials[0]));
		expect(audit.map((a) => a.action)).toContain('module.install');

		const view = await getSystem(db, saltDealer, systemId);
		expect(view.strings[0].slots[0]).toMatchObject({ serial: serials[0], state: 'installed' });
		expect(view.next).toEqual({ stringNo: 1, position: 2 });
	});

	it('lets a dealer’s technician place their own dealer’s module at their own site', async () => {
		const ridgeSite = await createSite(db, ridgeTech, site({ name: 'Ridge hut' }));
		const id = (await createSystem(db, ridgeTech, ridgeSite, system({ name: 'Hut rack' }))).id;
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Ridgeline Off-Grid Supply');
		expect(await placeModule(db, ridgeTech, id, null, serial)).toMatchObject({
			serial,
			stringNo: 1,
			position: 1
		});
	});

	it('fills string by string', () => {
		expect(nextEmptySlot(3, 2, [{ stringNo: 1, position: 1 }])).toEqual({
			stringNo: 1,
			position: 2
		});
		expect(
			nextEmptySlot(2, 2, [
				{ stringNo: 1, position: 1 },
				{ stringNo: 1, position: 2 }
			])
		).toEqual({ stringNo: 2, position: 1 });
		expect(nextEmptySlot(1, 1, [{ stringNo: 1, position: 1 }])).toBeNull();
	});

	it('refuses a module of another model', async () => {
		const [serial] = await makeModules(db, workshop, { code: 'TC-HC-12', count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Saltmarsh Solar');
		await expect(placeModule(db, tideTech, systemId, null, serial)).rejects.toThrow(
			`${serial} is a TC-HC-12; this system is built from TC-HC-48.`
		);
	});

	it('refuses a module installed elsewhere, naming the system, site and slot', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Saltmarsh Solar');
		const otherSite = await createSite(
			db,
			tideTech,
			site({ name: 'Reed Cottage', dealerOrgId: saltmarsh })
		);
		const other = (await createSystem(db, tideTech, otherSite, system({ name: 'Barn rack' }))).id;
		await placeModule(db, tideTech, other, { stringNo: 1, position: 2 }, serial);
		await expect(placeModule(db, tideTech, systemId, null, serial)).rejects.toThrow(
			`${serial} is installed in Barn rack at Reed Cottage (string 1, position 2).`
		);
	});

	it('refuses a module shipped to another dealer; that dealer’s own technician cannot see the module or the site at all', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Ridgeline Off-Grid Supply');
		await expect(placeModule(db, tideTech, systemId, null, serial)).rejects.toThrow(
			`${serial} was shipped to Ridgeline Off-Grid Supply, not to this site's dealer (Saltmarsh Solar).`
		);
		await expect(placeModule(db, ridgeTech, systemId, null, serial)).rejects.toThrow(
			`System ${systemId} is not in the register.`
		);
	});

	it('refuses a module that failed its factory test, one not tested yet, and one still in our stock for a dealer’s site', async () => {
		const [failed, untested, stock] = await makeModules(db, workshop, { count: 3, built: 3 });
		await db.update(modules).set({ state: 'test_failed' }).where(eq(modules.serial, failed));
		await db.update(modules).set({ state: 'in_stock' }).where(eq(modules.serial, stock));
		await expect(placeModule(db, tideTech, systemId, null, failed)).rejects.toThrow(
			`${failed} failed its factory test`
		);
		await expect(placeModule(db, tideTech, systemId, null, untested)).rejects.toThrow(
			/has no factory test result yet/
		);
		await expect(placeModule(db, tideTech, systemId, null, stock)).rejects.toThrow(
			`${stock} is still in stock at the workshop: ship it to Saltmarsh Solar`
		);
		// Our own installation takes stock, and refuses what went to a dealer.
		await placeModule(db, admin, ownSystemId, null, stock);
		expect((await stateOf(stock)).state).toBe('installed');
		const [shipped] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [shipped], 'Saltmarsh Solar');
		await expect(placeModule(db, admin, ownSystemId, null, shipped)).rejects.toThrow(
			/was shipped to Saltmarsh Solar; this site is our own installation/
		);
	});

	it('refuses a filled slot, a slot outside the system, and an unknown serial; nothing changes', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Saltmarsh Solar');
		await expect(
			placeModule(db, tideTech, systemId, { stringNo: 1, position: 1 }, serial)
		).rejects.toThrow(/String 1, position 1 already holds PL48-/);
		await expect(
			placeModule(db, tideTech, systemId, { stringNo: 3, position: 1 }, serial)
		).rejects.toThrow('String 3, position 1 is outside this system (2 strings of 2).');
		await expect(
			placeModule(db, tideTech, systemId, null, 'PL48-26-999999Z')
		).rejects.toBeInstanceOf(NotFoundError);
		expect((await stateOf(serial)).state).toBe('shipped');
		await expect(placeModule(db, saltDealer, systemId, null, serial)).rejects.toBeInstanceOf(
			ForbiddenError
		);
	});

	it('takes a module out before commissioning (back to the dealer), and refuses both once commissioned', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Saltmarsh Solar');
		const placed = await placeModule(db, tideTech, systemId, null, serial);
		expect(placed).toMatchObject({ stringNo: 1, position: 2 });
		const out = await removeModule(db, tideTech, systemId, serial);
		expect(out).toMatchObject({ serial, stringNo: 1, position: 2, state: 'shipped' });
		expect(await stateOf(serial)).toMatchObject({ state: 'shipped', systemId: null });
		const events = await db
			.select()
			.from(moduleEvents)
			.where(eq(moduleEvents.moduleId, (await stateOf(serial)).id));
		expect(events.map((e) => e.summary)).toContain(
			"Taken out of Shed north at Willow Lane (string 1, position 2) before commissioning; back in Saltmarsh Solar's stock"
		);
		await expect(removeModule(db, tideTech, systemId, serial)).rejects.toThrow(
			`${serial} is not in Shed north.`
		);

		await placeModule(db, tideTech, systemId, null, serial);
		await db.update(systems).set({ status: 'commissioned' }).where(eq(systems.id, systemId));
		await expect(removeModule(db, tideTech, systemId, serial)).rejects.toBeInstanceOf(
			ConflictError
		);
		const [another] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [another], 'Saltmarsh Solar');
		await expect(placeModule(db, tideTech, systemId, null, another)).rejects.toThrow(
			/is commissioned/
		);
		expect((await getSystem(db, tideTech, systemId)).open).toBe(false);
	});

	it('says when every slot is filled and the system is ready for commissioning', async () => {
		const siteId2 = await createSite(
			db,
			tideTech,
			site({ name: 'Single rack', dealerOrgId: saltmarsh })
		);
		const id = (
			await createSystem(db, tideTech, siteId2, system({ name: 'Rack', series: 2, parallel: 1 }))
		).id;
		const serials = await makeModules(db, workshop, { count: 3, built: 3 });
		await assignToDealer(db, serials, 'Saltmarsh Solar');
		await placeModule(db, tideTech, id, null, serials[0]);
		await placeModule(db, tideTech, id, null, serials[1]);
		expect(await getSystem(db, tideTech, id)).toMatchObject({
			filled: 2,
			total: 2,
			next: null,
			readyToCommission: true
		});
		await expect(placeModule(db, tideTech, id, null, serials[2])).rejects.toThrow(
			'Every slot of Rack is filled (2 of 2).'
		);
		const listed = (await listSites(db, tideTech)).find((s) => s.id === siteId2)!;
		expect(listed).toMatchObject({ systemCount: 1, status: 'planned' });
	});
});

describe('design check API logic', () => {
	// An invented "48 V" inverter: 36–64 V DC, preferred 39–62 V.
	const inverter = { minV: 36, maxV: 64, preferredMinV: 39, preferredMaxV: 62 };

	it('checks a model by code and suggests variants from the register', async () => {
		const req = designCheckRequestSchema.parse({
			model: 'tc-hc-12',
			series: 4,
			parallel: 1,
			inverter,
			targetEnergyKWh: 9
		});
		const r = await designCheck(db, req);
		// 4 × 6 cells × 1.8 / 2.35 / 2.75 V; 66.0 V is above the 64 V maximum.
		expect(r.stringVoltage).toEqual({ min: 43.2, nominal: 56.4, max: 66 });
		expect(r.fitsWindow).toBe(false);
		expect(r.problems[0]).toContain(
			"String maximum 66.0 V is above the inverter's 64.0 V DC maximum"
		);
		// 2 × TC-HC-24 × 2 strings = 9.2 kWh in 39.6–60.5 V: inside the preferred range, fewest modules, smallest surplus.
		expect(r.suggestions[0]).toMatchObject({
			code: 'TC-HC-24',
			series: 2,
			parallel: 2,
			energyKWh: 9.2,
			fitsPreferred: true
		});
		for (const s of r.suggestions) {
			expect(['TC-HC-12', 'TC-HC-24', 'TC-HC-48']).toContain(s.code);
			expect(s.stringVoltage.min).toBeGreaterThanOrEqual(36);
			expect(s.stringVoltage.max).toBeLessThanOrEqual(64);
			expect(s.energyKWh).toBeGreaterThanOrEqual(9);
		}
	});

	it('checks given module figures without suggestions, answers 404 for an unknown model, and names missing input', async () => {
		const module = {
			cellsSeries: 22,
			cellMinV: 1.9,
			cellNominalV: 2.35,
			cellMaxV: 2.75,
			ratedAh: 46.5,
			usableWh: 2300,
			maxContinuousC: 3,
			burstC: 8
		};
		const r = await designCheck(
			db,
			designCheckRequestSchema.parse({ module, series: 1, parallel: 2, inverter })
		);
		expect(r).toMatchObject({
			fitsWindow: true,
			energyKWh: 4.6,
			continuousCurrentA: 279,
			suggestions: []
		});
		await expect(
			designCheck(
				db,
				designCheckRequestSchema.parse({ model: 'TC-HC-99', series: 1, parallel: 1, inverter })
			)
		).rejects.toThrow(/no module model TC-HC-99.*TC-HC-48/);
		const neither = designCheckRequestSchema.safeParse({
			series: 0,
			parallel: 1,
			inverter: { minV: 60, maxV: 40 }
		});
		const paths = neither.error!.issues.map((i) => i.path.join('.'));
		expect(paths).toEqual(expect.arrayContaining(['series', 'inverter.minV']));
		const both = designCheckRequestSchema.safeParse({
			module,
			model: 'TC-HC-48',
			series: 1,
			parallel: 1,
			inverter
		});
		expect(both.error!.issues[0]).toMatchObject({
			path: ['model'],
			message: 'Give either "module" or "model", not both.'
		});
	});
});
