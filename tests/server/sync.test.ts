import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	attachments,
	auditLog,
	commissionings,
	modules,
	organisations,
	sites,
	syncOperations,
	systems,
	systemSlots
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { applyOperations } from '$lib/server/services/sync';
import { placeModule } from '$lib/server/services/system-modules';
import { UNKNOWN_SERIAL } from '$lib/server/services/modules';
import { closeMailer } from '$lib/server/mail';
import {
	CONFLICT_PATH,
	DEPENDENCY_PATH,
	syncRequestSchema,
	type SyncOperation
} from '$lib/schemas/sync';
import { actorFor, createSeededDb } from '../factories/db';
import { assignToDealer, makeModules } from '../factories/modules';
import { SIGNATURE } from '../factories/signatures';

let db: Db;
let workshop: Actor, tech: Actor, ridgeTech: Actor, dealer: Actor;
let saltmarsh: number;

beforeAll(async () => {
	db = await createSeededDb();
	[workshop, tech, ridgeTech, dealer] = await Promise.all(
		[
			'workshop@tidewater.example',
			'tech@tidewater.example',
			'tech@ridgeline.example',
			'dealer@saltmarsh.example'
		].map((e) => actorFor(db, e))
	);
	const [org] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.name, 'Saltmarsh Solar'));
	saltmarsh = org.id;
});
afterAll(async () => closeMailer(db));

// The payloads are the form fields exactly as the phone's forms send them (text).
const sitePayload = (name = 'Gullwing croft') => ({
	name,
	ownerName: 'Tamsin Reed',
	ownerContact: '+61 400 111 222',
	address: '12 Gullwing Track, Saltmarsh coast',
	application: 'off_grid_home',
	// Filed under Saltmarsh Solar (a dealer's own technicians' sites always go under their dealer).
	dealerOrgId: String(saltmarsh)
});
// 2 × TC-HC-48 (22 cells of 1.8 / 2.35 / 2.75 V, invented model): string 79.2 to 121.0 V,
// inside a 70–130 V window.
const systemPayload = (siteId: number | string, name = 'Croft bank') => ({
	siteId,
	name,
	modelCode: 'TC-HC-48',
	series: '2',
	parallel: '1',
	inverterName: 'Invented 5 kW inverter',
	inverterMinV: '70',
	inverterMaxV: '130',
	preferredMinV: '',
	preferredMaxV: '',
	maxChargeA: '',
	maxDischargeA: ''
});
// A signature as the phone's pad sends it: strokes of points in a 300 × 120 box.
// A passing checklist for 2 × TC-HC-48 (same figures as tests/server/commissioning.test.ts):
// IEC 60364-6 Table 6.1 asks 500 V DC and ≥ 1.0 MΩ for a circuit up to 500 V.
const checklist = (systemId: number | string) => ({
	systemId,
	'moduleOcvV.1.1': '50,60',
	'moduleOcvV.1.2': '50,62',
	'stringVoltageV.1': '101,2',
	interStringDiffV: '',
	insulationTestV: '500',
	insulationMohm: '50',
	polarityChecked: 'yes',
	torqueConfirmed: 'yes',
	deviceRatingA: '200',
	deviceDcRatingV: '150',
	// One string of TC-HC-48: about 10 kA prospective (module maximum over its 6 mΩ); 25 kA breaks it.
	deviceBreakingKA: '25',
	ambientC: '18,5',
	stopChargeProven: 'yes',
	technicianName: 'Ilse Fenwick',
	licenceNumber: 'EL-40917',
	handoverName: 'Tamsin Reed',
	technicianSignature: SIGNATURE,
	ownerSignature: SIGNATURE,
	cautionsAcknowledged: 'yes'
});

// The smallest valid PNG (1 × 1), as a phone would send a photo: bytes in base64.
const PNG =
	'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==';

const op = (type: SyncOperation['type'], payload: Record<string, unknown>): SyncOperation => ({
	id: randomUUID(),
	type,
	payload
});
const count = async (table: typeof sites | typeof systems | typeof attachments) =>
	(await db.select().from(table)).length;

async function shippedModules(n: number, to = 'Saltmarsh Solar') {
	const serials = await makeModules(db, workshop, { count: n, built: n });
	await assignToDealer(db, serials, to);
	return serials;
}

/** A whole field day queued offline: site → system → two modules → photo → checklist. */
async function fieldDay() {
	const serials = await shippedModules(2);
	const site = op('createSite', sitePayload());
	const system = op('createSystem', systemPayload(site.id));
	const ops = [
		site,
		system,
		op('placeModule', { systemId: system.id, scan: serials[0], stringNo: '1', position: '1' }),
		op('placeModule', {
			systemId: system.id,
			scan: `https://packledger.example/m/${serials[1]}`,
			stringNo: '1',
			position: '2'
		}),
		op('addPhoto', {
			systemId: system.id,
			photo: { name: 'rack.png', type: 'image/png', base64: PNG },
			caption: 'Rack after torque check'
		}),
		op('submitCommissioning', { ...checklist(system.id), serials: [[serials[0], serials[1]]] })
	];
	return { ops, serials, site, system };
}

describe('sync: dependencies and exactly-once', () => {
	it('applies a field day in order, each later operation finding the record an earlier one made', async () => {
		const { ops, serials } = await fieldDay();
		const results = await applyOperations(db, tech, ops, { baseUrl: 'https://packledger.example' });
		expect(results.map((r) => r.status)).toEqual(Array(6).fill('applied'));
		expect(results.map((r) => r.id)).toEqual(ops.map((o) => o.id));
		const [siteId, systemId, , , photoId, commissioningId] = results.map((r) => r.ref);
		const [system] = await db
			.select()
			.from(systems)
			.where(eq(systems.id, systemId as number));
		expect(system).toMatchObject({ siteId, status: 'commissioned' });
		expect(results[2].ref).toBe(serials[0]);
		const [c] = await db
			.select()
			.from(commissionings)
			.where(eq(commissionings.id, commissioningId as number));
		expect(c.certificateNo).toMatch(/^PLC-\d{4}-\d{5}$/);
		const [photo] = await db
			.select()
			.from(attachments)
			.where(eq(attachments.id, photoId as number));
		expect(photo).toMatchObject({
			ownerKind: 'system',
			ownerId: systemId,
			caption: 'Rack after torque check'
		});
		const mods = await db
			.select()
			.from(modules)
			.where(eq(modules.systemId, systemId as number));
		expect(mods.map((m) => m.state)).toEqual(['commissioned', 'commissioned']);
	});

	it('answers a replayed queue with duplicate and the same refs, storing nothing', async () => {
		const { ops } = await fieldDay();
		const first = await applyOperations(db, tech, ops);
		const before = {
			sites: await count(sites),
			systems: await count(systems),
			photos: await count(attachments),
			audit: (await db.select().from(auditLog)).length,
			slots: (await db.select().from(systemSlots)).length,
			commissionings: (await db.select().from(commissionings)).length
		};
		const again = await applyOperations(db, tech, ops);
		expect(again.map((r) => r.status)).toEqual(Array(6).fill('duplicate'));
		expect(again.map((r) => r.ref)).toEqual(first.map((r) => r.ref));
		expect({
			sites: await count(sites),
			systems: await count(systems),
			photos: await count(attachments),
			audit: (await db.select().from(auditLog)).length,
			slots: (await db.select().from(systemSlots)).length,
			commissionings: (await db.select().from(commissionings)).length
		}).toEqual(before);
	});

	it('applies each operation once when the same queue arrives twice at the same moment', async () => {
		const { ops } = await fieldDay();
		const sitesBefore = await count(sites);
		const [a, b] = await Promise.all([
			applyOperations(db, tech, ops),
			applyOperations(db, tech, ops)
		]);
		for (let i = 0; i < ops.length; i++) {
			expect([a[i].status, b[i].status].sort()).toEqual(['applied', 'duplicate']);
			expect(a[i].ref).toBe(b[i].ref);
		}
		expect(await count(sites)).toBe(sitesBefore + 1);
		const recorded = await db.select().from(syncOperations);
		expect(recorded.filter((r) => ops.some((o) => o.id === r.id))).toHaveLength(ops.length);
	});

	it('refuses an operation id another account already used, without saying what it made', async () => {
		const first = op('createSite', sitePayload('Ridge relay hut'));
		await applyOperations(db, tech, [first]);
		const [r] = await applyOperations(db, ridgeTech, [first]);
		expect(r.status).toBe('rejected');
		expect(r.ref).toBeUndefined();
		expect(r.issues?.[0].path).toBe('id');
	});
});

describe('sync: rejection', () => {
	it('rejects bad data with the form’s own issues and carries on with the next operation', async () => {
		const bad = op('createSite', { ...sitePayload(), ownerContact: 'call me', name: 'X' });
		const good = op('createSite', sitePayload('Tern Bay shed'));
		const [r1, r2] = await applyOperations(db, tech, [bad, good]);
		expect(r1.status).toBe('rejected');
		expect(r1.issues?.map((i) => i.path).sort()).toEqual(['name', 'ownerContact']);
		expect(r1.issues?.find((i) => i.path === 'name')?.message).toBe(
			'Site name needs at least 2 characters, e.g. Willow Lane farm.'
		);
		expect(r2.status).toBe('applied');
		// A rejected operation is not recorded: corrected, it can be sent again with the same id.
		const [fixed] = await applyOperations(db, tech, [
			{ ...bad, payload: sitePayload('Tern Bay hut') }
		]);
		expect(fixed.status).toBe('applied');
	});

	it('rejects what depends on a rejected operation, naming it, and applies it once that one is fixed', async () => {
		const site = op('createSite', { ...sitePayload(), address: 'x' });
		const system = op('createSystem', systemPayload(site.id, 'Pending bank'));
		const [r1, r2] = await applyOperations(db, tech, [site, system]);
		expect(r1.status).toBe('rejected');
		expect(r2).toMatchObject({ status: 'rejected', issues: [{ path: DEPENDENCY_PATH }] });
		expect(r2.issues?.[0].message).toContain(site.id.slice(0, 8));
		expect((await db.select().from(systems).where(eq(systems.name, 'Pending bank'))).length).toBe(
			0
		);
		const again = await applyOperations(db, tech, [
			{ ...site, payload: sitePayload('Pending croft') },
			system
		]);
		expect(again.map((r) => r.status)).toEqual(['applied', 'applied']);
		const [row] = await db
			.select()
			.from(systems)
			.where(eq(systems.id, again[1].ref as number));
		expect(row.siteId).toBe(again[0].ref);
	});

	it('rejects a design outside the inverter window with the design check’s reasons', async () => {
		const site = op('createSite', sitePayload('Narrow window hut'));
		// 2 × TC-HC-48 reach 121.0 V at 2.75 V per cell: above a 110 V maximum.
		const system = op('createSystem', { ...systemPayload(site.id), inverterMaxV: '110' });
		const [, r] = await applyOperations(db, tech, [site, system]);
		expect(r.status).toBe('rejected');
		expect(r.issues?.every((i) => i.path === 'design')).toBe(true);
	});

	it('keeps another dealer’s module and site out of reach, exactly like missing ones', async () => {
		const [ridgeModule] = await shippedModules(1, 'Ridgeline Off-Grid Supply');
		const [saltModule] = await shippedModules(1, 'Saltmarsh Solar');
		const ridgeSite = op('createSite', sitePayload('Ridge relay hut'));
		const ridgeSystem = op('createSystem', systemPayload(ridgeSite.id, 'Relay bank'));
		const mine = await applyOperations(db, ridgeTech, [
			ridgeSite,
			ridgeSystem,
			op('placeModule', { systemId: ridgeSystem.id, scan: saltModule })
		]);
		expect(mine.map((r) => r.status)).toEqual(['applied', 'applied', 'rejected']);
		// A Saltmarsh module answers a Ridgeline technician like a serial that does not exist.
		expect(mine[2].issues?.[0].message).toBe(UNKNOWN_SERIAL(saltModule));
		// A Saltmarsh system answers by its number like a missing one.
		const salt = await applyOperations(db, tech, (await fieldDay()).ops.slice(0, 2));
		const saltSystem = salt[1].ref as number;
		const [hidden] = await applyOperations(db, ridgeTech, [
			op('placeModule', { systemId: saltSystem, scan: ridgeModule })
		]);
		expect(hidden.issues?.[0].message).toBe(`System ${saltSystem} is not in the register.`);
		// And the assembler's technician cannot put Ridgeline's module into a Saltmarsh site.
		const [wrongDealer] = await applyOperations(db, tech, [
			op('placeModule', { systemId: saltSystem, scan: ridgeModule })
		]);
		expect(wrongDealer.issues?.[0].message).toBe(
			`${ridgeModule} was shipped to Ridgeline Off-Grid Supply, not to this site's dealer (Saltmarsh Solar).`
		);
	});

	it('refuses dealer office staff, who view sites but do not record them', async () => {
		await expect(applyOperations(db, dealer, [op('createSite', sitePayload())])).rejects.toThrow(
			/Only field technicians and administrators/
		);
	});

	it('rejects a photo that is not an image, with the upload form’s message', async () => {
		const { ops } = await fieldDay();
		const [, , r] = await applyOperations(db, tech, [
			...ops.slice(0, 2),
			op('addPhoto', {
				systemId: ops[1].id,
				photo: {
					name: 'notes.pdf',
					type: 'image/jpeg',
					base64: Buffer.from('%PDF-1.7 x').toString('base64')
				}
			})
		]);
		expect(r.status).toBe('rejected');
		expect(r.issues?.[0].message).toBe(
			'notes.pdf is a PDF file, not a photo Packledger keeps; send a JPEG, PNG or WebP photo.'
		);
	});
});

describe('sync: conflicts', () => {
	it('marks a slot filled meanwhile by someone else as a conflict, and places the other module anyway', async () => {
		const { ops, serials, system } = await fieldDay();
		const [r1, r2] = await applyOperations(db, tech, ops.slice(0, 2));
		expect([r1.status, r2.status]).toEqual(['applied', 'applied']);
		// While the phone was offline a colleague placed another module at string 1, position 1.
		const [other] = await shippedModules(1);
		await placeModule(db, tech, r2.ref as number, { stringNo: 1, position: 1 }, other);
		const results = await applyOperations(db, tech, ops.slice(2));
		expect(results[0]).toMatchObject({ status: 'rejected', issues: [{ path: CONFLICT_PATH }] });
		expect(results[0].issues?.[0].message).toBe(
			`String 1, position 1 already holds ${other}. Take it out first or choose an empty slot.`
		);
		expect(results[1].status).toBe('applied');
		expect(results[2].status).toBe('applied');
		// The checklist was measured on the phone's modules: the register refuses it, nothing is commissioned.
		expect(results[3]).toMatchObject({ status: 'rejected', issues: [{ path: CONFLICT_PATH }] });
		expect(results[3].issues?.[0].message).toBe(
			`The modules of Croft bank changed while you were offline: string 1 position 1 holds ${other} (your readings: ${serials[0]}). Check the modules, then take the readings again or send them anyway.`
		);
		const [row] = await db
			.select()
			.from(systems)
			.where(eq(systems.id, r2.ref as number));
		expect(row.status).toBe('planned');
		// The technician chooses to place theirs in the next empty slot... but there is none: still a conflict.
		const [retry] = await applyOperations(db, tech, [
			{ id: ops[2].id, type: 'placeModule', payload: { systemId: system.id, scan: serials[0] } }
		]);
		expect(retry).toMatchObject({ status: 'rejected', issues: [{ path: CONFLICT_PATH }] });
	});

	it('refuses a checklist for a system someone else commissioned meanwhile, saying by whom', async () => {
		const { ops } = await fieldDay();
		const applied = await applyOperations(db, tech, ops.slice(0, 5));
		expect(applied.every((r) => r.status === 'applied')).toBe(true);
		const colleague = op('submitCommissioning', {
			...checklist(applied[1].ref as number),
			technicianName: 'Odo Brack'
		});
		expect((await applyOperations(db, tech, [colleague]))[0].status).toBe('applied');
		const [mine] = await applyOperations(db, tech, [ops[5]]);
		expect(mine.status).toBe('rejected');
		expect(mine.issues?.[0].path).toBe(CONFLICT_PATH);
		expect(mine.issues?.[0].message).toMatch(
			/is already commissioned \(certificate PLC-\d{4}-\d{5} of \d{4}-\d{2}-\d{2}\); it cannot be commissioned again\.$/
		);
	});
});

describe('sync request', () => {
	it('bounds the number of operations and insists on UUIDs and known types', () => {
		const many = Array.from({ length: 101 }, () => op('createSite', sitePayload()));
		const r = syncRequestSchema.safeParse({ operations: many });
		expect(r.success).toBe(false);
		expect(r.error?.issues[0].message).toBe(
			'Send at most 100 operations per request; send the rest in another request.'
		);
		expect(syncRequestSchema.safeParse({ operations: many.slice(0, 100) }).success).toBe(true);
		const bad = syncRequestSchema.safeParse({
			operations: [{ id: 'not-a-uuid', type: 'deleteEverything', payload: {} }]
		});
		expect(bad.error?.issues.map((i) => i.path.join('.')).sort()).toEqual([
			'operations.0.id',
			'operations.0.type'
		]);
	});
});
