/**
 * The invented demo fleet of Tidewater Cellworks, made through the real services so that
 * every module has a true timeline: modules at every stage of their life, factory imports
 * with a few failures, shipments to each dealer, sites and systems, commissioned systems
 * (one from 2023, so warranty claims have years behind them). Runs once: skipped when the
 * register already holds modules.
 */
import { count, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, modules, organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { allocateSerials } from '$lib/server/services/allocations';
import { registerBuild } from '$lib/server/services/builds';
import { commitImport, previewImport } from '$lib/server/services/imports';
import {
	addRangeToShipment,
	createShipment,
	dispatchShipment
} from '$lib/server/services/shipments';
import { createSite } from '$lib/server/services/sites';
import { createSystem, placeModule } from '$lib/server/services/systems';
import { submitCommissioning } from '$lib/server/services/commissioning';
import { commissioningSchema } from '$lib/schemas/commissioning';
import { BUILD_CHECKS } from '$lib/schemas/build';
import { actorForEmail, getModelIdByCode } from './demo-actors';
import { fileClaim } from '$lib/server/services/claims';
import { decideClaim, moveClaim, replaceModule } from '$lib/server/services/claim-workflow';

const CHECKS = BUILD_CHECKS.map((c) => c.key);
const at = (iso: string) => new Date(iso);

async function run(
	db: Db,
	workshop: Actor,
	modelCode: string,
	n: number,
	when: Date,
	lots: string[][],
	testFail: number[] = []
) {
	const modelId = await getModelIdByCode(db, modelCode);
	const alloc = await allocateSerials(db, workshop, { modelId, count: n }, when);
	const rows = await db
		.select({ serial: modules.serial })
		.from(modules)
		.where(eq(modules.allocationId, alloc.id));
	const serials = rows.map((r) => r.serial);
	return { serials, testFail, lots, when, modelId };
}

/** Builds, tests (through a rig file) and returns the serials of a run. */
async function buildAndTest(
	db: Db,
	workshop: Actor,
	r: Awaited<ReturnType<typeof run>>,
	built: number,
	tested: number
) {
	const t = r.when.getTime();
	const [m] = await db.select().from(moduleModels).where(eq(moduleModels.id, r.modelId));
	for (const [i, serial] of r.serials.slice(0, built).entries())
		await registerBuild(
			db,
			workshop,
			serial,
			{ cellLots: r.lots[i % r.lots.length], checks: CHECKS, notes: '' },
			new Date(t + (i + 1) * 600_000)
		);
	const lines = r.serials.slice(0, tested).map((s, i) => {
		const fail = r.testFail.includes(i);
		const when = new Date(t + 86_400_000 + i * 300_000).toISOString();
		const cap = fail ? m.minCapacityAh - 0.8 : m.minCapacityAh + 1.4 + (i % 7) * 0.11;
		const dcir = m.maxDcirMohm * (0.78 + (i % 5) * 0.02);
		const ocv = m.cellsSeries * 2.33;
		return `${s},${when},${cap.toFixed(2)},${Math.round(cap * m.cellsSeries * 2.35)},${dcir.toFixed(2)},${ocv.toFixed(2)},${6 + (i % 6)},${560 + (i % 9) * 12},21.5,RIG-2,Tobin Vale`;
	});
	if (!lines.length) return;
	const csv = [
		'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator',
		...lines
	].join('\r\n');
	const p = await previewImport(
		db,
		workshop,
		{ name: `rig2-${r.when.toISOString().slice(0, 10)}.csv`, content: csv, bytes: csv.length },
		new Date(t + 3 * 86_400_000)
	);
	await commitImport(db, workshop, p.import.id, new Date(t + 3 * 86_400_000));
}

async function ship(
	db: Db,
	workshop: Actor,
	dealer: string,
	first: string,
	last: string,
	when: Date
) {
	const [org] = await db.select().from(organisations).where(eq(organisations.name, dealer));
	const s = await createShipment(db, workshop, { dealerOrgId: org.id, note: null }, when);
	await addRangeToShipment(db, workshop, s.id, first, last, when);
	await dispatchShipment(db, workshop, s.id, when);
}

/** An invented demo signature: a few looping strokes, as signature_pad would record them. */
function demoSignature(seed: number): string {
	const strokes: [number, number][][] = [];
	for (let k = 0; k < 3; k++) {
		const stroke: [number, number][] = [];
		for (let i = 0; i <= 24; i++) {
			const t = i / 24;
			const x = 40 + k * 160 + t * 140;
			const y = 100 + Math.sin(t * Math.PI * (2 + ((seed + k) % 3))) * (30 + 10 * k);
			stroke.push([Math.round(x * 10) / 10, Math.round(y * 10) / 10]);
		}
		strokes.push(stroke);
	}
	return JSON.stringify({ w: 600, h: 200, strokes });
}

const measurements = (series: number, parallel: number, insulation = '120') => {
	const form: Record<string, string> = {};
	for (let s = 1; s <= parallel; s++) {
		for (let p = 1; p <= series; p++)
			form[`moduleOcvV.${s}.${p}`] = (51.2 + ((s + p) % 3) * 0.01).toFixed(2);
		form[`stringVoltageV.${s}`] = (51.2 * series + 0.02).toFixed(2);
	}
	return commissioningSchema.parse({
		...form,
		interStringDiffV: parallel > 1 ? '0.04' : '',
		insulationTestV: '500',
		insulationMohm: insulation,
		polarityChecked: 'yes',
		torqueConfirmed: 'yes',
		deviceRatingA: String(Math.ceil((3 * 46.5 * parallel * 1.25) / 10) * 10 + 10),
		deviceDcRatingV: '150',
		// TC-HC-48 with 6.0 mΩ: each string adds 60.5 V / 6.0 mΩ ≈ 10.1 kA of fault current.
		deviceBreakingKA: String(Math.ceil(parallel * 10.1) + 5),
		stringProtection: parallel > 1 ? 'yes' : '',
		ambientC: '17.5',
		stopChargeProven: 'yes',
		technicianName: 'Ilse Fenwick',
		licenceNumber: 'EL-40917',
		handoverName: 'Marra Quill',
		technicianSignature: demoSignature(series + parallel),
		ownerSignature: demoSignature(series * parallel + 7),
		cautionsAcknowledged: 'yes'
	});
};

export async function seedDemoFleet(db: Db) {
	const [{ n }] = await db.select({ n: count() }).from(modules);
	if (n > 0) return false;
	const workshop = await actorForEmail(db, 'workshop@tidewater.example');
	const tech = await actorForEmail(db, 'tech@tidewater.example');

	// 2023: a run that went to Saltmarsh Solar and has been in service since June 2023.
	const old = await run(db, workshop, 'TC-HC-48', 8, at('2023-04-03T07:30:00Z'), [
		['HCL-2313-A'],
		['HCL-2313-A', 'HCL-2313-B']
	]);
	await buildAndTest(db, workshop, old, 8, 8);
	await ship(
		db,
		workshop,
		'Saltmarsh Solar',
		old.serials[0],
		old.serials[7],
		at('2023-04-20T10:00:00Z')
	);

	// 2026 production: 48 V, 24 V and 12 V runs at every stage.
	const r48 = await run(
		db,
		workshop,
		'TC-HC-48',
		40,
		at('2026-10-05T07:30:00Z'),
		[['HCL-2640-A'], ['HCL-2640-A', 'HCL-2640-B'], ['HCL-2641-A']],
		[13, 27]
	);
	await buildAndTest(db, workshop, r48, 36, 32);
	const r24 = await run(
		db,
		workshop,
		'TC-HC-24',
		24,
		at('2026-10-19T07:30:00Z'),
		[['HCL-2642-C'], ['HCL-2642-D']],
		[5]
	);
	await buildAndTest(db, workshop, r24, 20, 18);
	const r12 = await run(db, workshop, 'TC-HC-12', 12, at('2026-11-09T07:30:00Z'), [['HCL-2645-A']]);
	await buildAndTest(db, workshop, r12, 8, 6);

	await ship(
		db,
		workshop,
		'Saltmarsh Solar',
		r48.serials[0],
		r48.serials[9],
		at('2026-10-22T09:00:00Z')
	);
	await ship(
		db,
		workshop,
		'Ridgeline Off-Grid Supply',
		r48.serials[14],
		r48.serials[25],
		at('2026-10-29T09:00:00Z')
	);
	await ship(
		db,
		workshop,
		'Northbank Electrical',
		r24.serials[0],
		r24.serials[3],
		at('2026-11-05T09:00:00Z')
	);
	await ship(
		db,
		workshop,
		'Ridgeline Off-Grid Supply',
		r24.serials[6],
		r24.serials[9],
		at('2026-11-12T09:00:00Z')
	);

	// Sites: Saltmarsh's 2023 cabin (commissioned 2023), a 2026 backup system (commissioned),
	// a Saltmarsh telecom hut still being installed; Ridgeline's units wait in its store.
	const [saltmarsh] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.name, 'Saltmarsh Solar'));
	const cabin = await createSite(
		db,
		tech,
		{
			name: 'Heron Point cabin',
			ownerName: 'Marra Quill',
			ownerContact: 'marra.quill@homes.example',
			address: '4 Heron Point Track, Saltmarsh coast',
			application: 'off_grid_home',
			dealerOrgId: saltmarsh.id
		},
		at('2023-06-12T08:00:00Z')
	);
	const inverter = {
		inverterName: 'Invented 8 kW hybrid inverter',
		inverterMinV: 38,
		inverterMaxV: 64,
		preferredMinV: 42,
		preferredMaxV: 62,
		maxChargeA: 150,
		maxDischargeA: 180
	};
	const cabinSys = await createSystem(
		db,
		tech,
		cabin,
		{ name: 'Cabin bank', modelCode: 'TC-HC-48', series: 1, parallel: 4, ...inverter },
		at('2023-06-12T08:10:00Z')
	);
	for (const s of old.serials.slice(0, 4))
		await placeModule(db, tech, cabinSys.id, null, s, undefined, at('2023-06-12T09:00:00Z'));
	await submitCommissioning(db, tech, cabinSys.id, measurements(1, 4), at('2023-06-12T11:00:00Z'));

	const depot = await createSite(
		db,
		tech,
		{
			name: 'Gull Cove boatyard',
			ownerName: 'Ansel Drury',
			ownerContact: '+00 555 0142',
			address: 'Slipway 2, Gull Cove',
			application: 'backup',
			dealerOrgId: saltmarsh.id
		},
		at('2026-11-02T08:00:00Z')
	);
	const depotSys = await createSystem(
		db,
		tech,
		depot,
		{ name: 'Workshop backup', modelCode: 'TC-HC-48', series: 1, parallel: 4, ...inverter },
		at('2026-11-02T08:10:00Z')
	);
	for (const s of r48.serials.slice(0, 4))
		await placeModule(db, tech, depotSys.id, null, s, undefined, at('2026-11-02T09:00:00Z'));
	await submitCommissioning(
		db,
		tech,
		depotSys.id,
		measurements(1, 4, '0.6'),
		at('2026-11-02T10:30:00Z')
	);
	await submitCommissioning(db, tech, depotSys.id, measurements(1, 4), at('2026-11-02T12:15:00Z'));

	const hut = await createSite(
		db,
		tech,
		{
			name: 'Mast Hill relay hut',
			ownerName: 'Coastline Relay Co-op (invented)',
			ownerContact: 'ops@relay-coop.example',
			address: 'Mast Hill summit road',
			application: 'telecom',
			dealerOrgId: saltmarsh.id
		},
		at('2026-11-20T08:00:00Z')
	);
	const hutSys = await createSystem(
		db,
		tech,
		hut,
		{ name: 'Relay battery', modelCode: 'TC-HC-48', series: 1, parallel: 2, ...inverter },
		at('2026-11-20T08:10:00Z')
	);
	await placeModule(
		db,
		tech,
		hutSys.id,
		null,
		r48.serials[4],
		undefined,
		at('2026-11-20T09:00:00Z')
	);
	// Claims on the 2023 cabin bank: one decided and replaced, one waiting for the officer.
	const dealer = await actorForEmail(db, 'dealer@saltmarsh.example');
	const officer = await actorForEmail(db, 'warranty@tidewater.example');
	const perModuleWh = (efc: number) => String(Math.round(efc * 2300 * 4));
	const faded = await fileClaim(
		db,
		dealer,
		{
			serials: [old.serials[0]],
			fault: 'Bank no longer lasts the night',
			evidence: {
				measuredCapacityAh: '33.1',
				measuredAtC: '22',
				throughputWh: perModuleWh(3100),
				avgCellTempC: '27',
				maxCellTempC: '38',
				description:
					'Since August the cabin runs out of energy before dawn; a capacity test of this module gave 33.1 Ah.'
			}
		},
		at('2026-09-08T15:20:00Z')
	);
	await moveClaim(
		db,
		officer,
		faded.id,
		{ to: 'in_review', comment: 'Logs and capacity test received.' },
		at('2026-09-10T08:05:00Z')
	);
	await decideClaim(db, officer, faded.id, { decision: 'covered' }, at('2026-09-11T10:40:00Z'));
	await replaceModule(
		db,
		officer,
		faded.id,
		old.serials[0],
		r48.serials[26],
		undefined,
		at('2026-09-18T13:00:00Z')
	);
	await fileClaim(
		db,
		dealer,
		{
			serials: [old.serials[2]],
			fault: 'One module warmer than the others',
			evidence: {
				measuredCapacityAh: '44.0',
				measuredAtC: '21',
				throughputWh: perModuleWh(2900),
				avgCellTempC: '26',
				maxCellTempC: '41',
				description:
					'The owner noticed one module runs a few degrees warmer; its capacity test gave 44.0 Ah.'
			}
		},
		at('2026-11-24T09:45:00Z')
	);
	return { cabinSystemId: cabinSys.id, oldSerials: old.serials };
}
