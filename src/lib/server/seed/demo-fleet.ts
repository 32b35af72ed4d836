/**
 * The invented demo fleet of Tidewater Cellworks, made through the real services so that
 * every module has a true timeline: modules at every stage of their life, factory imports
 * with a few failures, shipments to each dealer, sites and systems, commissioned systems
 * (one from 2023, so warranty claims have years behind them). Runs once: skipped when the
 * register already holds modules.
 */
import { count, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { modules, organisations } from '$lib/server/db/schema';
import { createSite } from '$lib/server/services/sites';
import { createSystem } from '$lib/server/services/systems';
import { placeModule } from '$lib/server/services/system-modules';
import { submitCommissioning } from '$lib/server/services/commissioning-submit';
import { actorForEmail } from './demo-actors';
import { buildAndTest, measurements, run, ship } from './demo-steps';
import { fileClaim } from '$lib/server/services/claim-filing';
import { decideClaim, moveClaim, replaceModule } from '$lib/server/services/claim-workflow';
import { seedDemoHistory } from './demo-history';
import { claimEvidenceSchema } from '$lib/schemas/warranty-assess';

const at = (iso: string) => new Date(iso);

export async function seedDemoFleet(db: Db) {
	const [{ n }] = await db.select({ n: count() }).from(modules);
	if (n > 0) return false;
	const workshop = await actorForEmail(db, 'workshop@tidewater.example');
	const tech = await actorForEmail(db, 'tech@tidewater.example');

	// 2019–2021: an older cohort with years of service and claims, for the reliability page.
	await seedDemoHistory(db);

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
			climateBand: 'temperate',
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
			climateBand: 'temperate',
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
			evidence: claimEvidenceSchema.parse({
				measuredCapacityAh: '33.1',
				measuredAtC: '22',
				throughputWh: perModuleWh(3100),
				avgCellTempC: '27',
				maxCellTempC: '38',
				description:
					'Since August the cabin runs out of energy before dawn; a capacity test of this module gave 33.1 Ah.'
			})
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
			evidence: claimEvidenceSchema.parse({
				measuredCapacityAh: '44.0',
				measuredAtC: '21',
				throughputWh: perModuleWh(2900),
				avgCellTempC: '26',
				maxCellTempC: '41',
				description:
					'The owner noticed one module runs a few degrees warmer; its capacity test gave 44.0 Ah.'
			})
		},
		at('2026-11-24T09:45:00Z')
	);
	return { cabinSystemId: cabinSys.id, oldSerials: old.serials };
}
