/**
 * An invented older cohort of Tidewater Cellworks modules (built 2019–2021) with years in
 * service and the claims they brought, so the fleet's reliability has something to say:
 * one cell lot (HCL-2015-C) fails early, a few modules of other lots wear out later, one
 * claim is declined. Made through the real services, like the rest of the demo; the
 * admin enters the replacement costs the reserve prices its claims with.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, organisations } from '$lib/server/db/schema';
import type { ClimateBand } from '$lib/schemas/site';
import { createSite } from '$lib/server/services/sites';
import { createSystem } from '$lib/server/services/systems';
import { placeModule } from '$lib/server/services/system-modules';
import { submitCommissioning } from '$lib/server/services/commissioning-submit';
import { fileClaim } from '$lib/server/services/claim-filing';
import { decideClaim, moveClaim, replaceModule } from '$lib/server/services/claim-workflow';
import { actOnReturn } from '$lib/server/services/returns';
import type { ReturnActionInput } from '$lib/schemas/returns';
import { updateModel } from '$lib/server/services/models';
import { modelInputSchema } from '$lib/schemas/model';
import { actorForEmail } from './demo-actors';
import { at, buildAndTest, measurements, run, ship } from './demo-steps';
import { claimEvidenceSchema } from '$lib/schemas/warranty-assess';

/** Invented replacement costs per module (module, freight and labour), in the books' currency. */
const REPLACEMENT_COSTS: Record<string, number> = {
	'TC-HC-12': 1450,
	'TC-HC-24': 1520,
	'TC-HC-48': 1580
};

const DAY = 86_400_000;
const plusDays = (d: Date, n: number) => new Date(d.getTime() + n * DAY);

const INVERTER = {
	inverterName: 'Invented 8 kW hybrid inverter',
	inverterMinV: 38,
	inverterMaxV: 64,
	preferredMinV: 42,
	preferredMaxV: 62,
	maxChargeA: 150,
	maxDischargeA: 180
};

interface Bank {
	site: string;
	owner: string;
	address: string;
	application: 'off_grid_home' | 'backup' | 'ups' | 'workshop' | 'telecom';
	climate: ClimateBand;
	commissioned: string;
}

interface Cohort {
	built: string;
	dealer: string;
	dealerEmail: string;
	lots: string[][];
	banks: Bank[];
	/** Spares shipped with the run, used as replacements. */
	spares: number;
}

const COHORTS: Cohort[] = [
	{
		built: '2019-05-06T07:30:00Z',
		dealer: 'Ridgeline Off-Grid Supply',
		dealerEmail: 'dealer@ridgeline.example',
		lots: [['HCL-1919-A']],
		spares: 2,
		banks: [
			{
				site: 'Tarn Ridge homestead',
				owner: 'Elspeth Garrow',
				address: '12 Tarn Ridge Road',
				application: 'off_grid_home',
				climate: 'continental',
				commissioned: '2019-07-02T01:00:00Z'
			},
			{
				site: 'Dry Creek pump house',
				owner: 'Dry Creek Growers (invented)',
				address: 'Pump lane, Dry Creek',
				application: 'workshop',
				climate: 'arid',
				commissioned: '2019-08-14T01:00:00Z'
			},
			{
				site: 'Fernhollow cottage',
				owner: 'Bram Osterley',
				address: '3 Fernhollow Way',
				application: 'off_grid_home',
				climate: 'temperate',
				commissioned: '2019-09-23T01:00:00Z'
			}
		]
	},
	{
		built: '2020-04-14T07:30:00Z',
		dealer: 'Northbank Electrical',
		dealerEmail: 'dealer@northbank.example',
		lots: [['HCL-2015-B'], ['HCL-2015-C']],
		spares: 4,
		banks: [
			{
				site: 'Northbank clinic',
				owner: 'Northbank Community Clinic (invented)',
				address: '40 River Street, Northbank',
				application: 'ups',
				climate: 'tropical',
				commissioned: '2020-06-09T01:00:00Z'
			},
			{
				site: 'Mangrove Point repeater',
				owner: 'Coastline Relay Co-op (invented)',
				address: 'Mangrove Point track',
				application: 'telecom',
				climate: 'tropical',
				commissioned: '2020-07-21T01:00:00Z'
			},
			{
				site: 'Quay Street bakery',
				owner: 'Orla Pennick',
				address: '7 Quay Street, Northbank',
				application: 'backup',
				climate: 'temperate',
				commissioned: '2020-09-01T01:00:00Z'
			},
			{
				site: 'Sandbar boat shed',
				owner: 'Teodor Vance',
				address: 'Slip 4, Sandbar',
				application: 'workshop',
				climate: 'tropical',
				commissioned: '2020-10-13T01:00:00Z'
			}
		]
	},
	{
		built: '2021-03-08T07:30:00Z',
		dealer: 'Saltmarsh Solar',
		dealerEmail: 'dealer@saltmarsh.example',
		lots: [['HCL-2110-A']],
		spares: 1,
		banks: [
			{
				site: 'Reedbed farm',
				owner: 'Wren Calloway',
				address: 'Reedbed Lane, Saltmarsh coast',
				application: 'off_grid_home',
				climate: 'temperate',
				commissioned: '2021-05-11T01:00:00Z'
			},
			{
				site: 'Salt flats weather post',
				owner: 'Port Halden Weather Society (invented)',
				address: 'Salt flats access road',
				application: 'telecom',
				climate: 'arid',
				commissioned: '2021-06-29T01:00:00Z'
			},
			{
				site: 'Dune Row guesthouse',
				owner: 'Ines Marlow',
				address: '21 Dune Row',
				application: 'backup',
				climate: 'temperate',
				commissioned: '2021-08-17T01:00:00Z'
			}
		]
	}
];

/**
 * Claims on the cohort: [cohort, module index, filed, measured Ah, equivalent full cycles,
 * decided covered?]. TC-HC-48 rates 46.5 Ah: below the promise is covered, at or above declined.
 * The HCL-2015-C modules (odd indices of the 2020 run) fail in their first two years.
 */
const CLAIMS: [number, number, string, string, number, boolean][] = [
	[1, 1, '2020-11-24T02:00:00Z', '37.9', 160, true],
	[1, 5, '2021-05-18T02:00:00Z', '38.6', 310, true],
	[1, 9, '2021-10-05T02:00:00Z', '39.4', 420, true],
	[1, 13, '2022-08-30T02:00:00Z', '36.8', 680, true],
	[0, 2, '2024-03-12T02:00:00Z', '33.0', 1650, true],
	[0, 7, '2025-08-19T02:00:00Z', '31.7', 2100, true],
	[2, 4, '2025-02-04T02:00:00Z', '34.4', 1300, true],
	[2, 9, '2024-07-16T02:00:00Z', '46.4', 1100, false]
];

export async function seedDemoHistory(db: Db) {
	const admin = await actorForEmail(db, 'admin@tidewater.example');
	const workshop = await actorForEmail(db, 'workshop@tidewater.example');
	const tech = await actorForEmail(db, 'tech@tidewater.example');
	const officer = await actorForEmail(db, 'warranty@tidewater.example');

	for (const [code, cost] of Object.entries(REPLACEMENT_COSTS)) {
		const [m] = await db.select().from(moduleModels).where(eq(moduleModels.code, code));
		if (!m || m.replacementCost !== null) continue;
		const { id: _id, createdAt: _c, retiredAt: _r, ...fields } = m;
		await updateModel(
			db,
			admin,
			m.id,
			modelInputSchema.parse({ ...fields, replacementCost: cost }),
			at('2019-01-15T00:00:00Z')
		);
	}

	const runs = [];
	for (const c of COHORTS) {
		const n = c.banks.length * 4;
		const r = await run(db, workshop, 'TC-HC-48', n + c.spares, at(c.built), c.lots);
		await buildAndTest(db, workshop, r, n + c.spares, n + c.spares);
		const shipped = plusDays(at(c.built), 21);
		await ship(db, workshop, c.dealer, r.serials[0], r.serials[n + c.spares - 1], shipped);
		const [dealerOrg] = await db
			.select()
			.from(organisations)
			.where(eq(organisations.name, c.dealer));
		for (const [b, bank] of c.banks.entries()) {
			const when = at(bank.commissioned);
			const site = await createSite(
				db,
				tech,
				{
					name: bank.site,
					ownerName: bank.owner,
					ownerContact: `owner${b + 1}@sites.example`,
					address: bank.address,
					application: bank.application,
					climateBand: bank.climate,
					dealerOrgId: dealerOrg.id
				},
				plusDays(when, -1)
			);
			const sys = await createSystem(
				db,
				tech,
				site,
				{ name: 'Battery bank', modelCode: 'TC-HC-48', series: 1, parallel: 4, ...INVERTER },
				plusDays(when, -1)
			);
			for (const s of r.serials.slice(b * 4, b * 4 + 4))
				await placeModule(db, tech, sys.id, null, s, undefined, when);
			await submitCommissioning(db, tech, sys.id, measurements(1, 4), plusDays(when, 0.1));
		}
		runs.push({ serials: r.serials, spares: r.serials.slice(n), dealerEmail: c.dealerEmail });
	}

	const spareUsed = runs.map(() => 0);
	const sorted = [...CLAIMS].sort((a, b) => a[2].localeCompare(b[2]));
	for (const [ci, mi, filed, ah, efc, covered] of sorted) {
		const cohort = runs[ci];
		const dealer = await actorForEmail(db, cohort.dealerEmail);
		const when = at(filed);
		const claim = await fileClaim(
			db,
			dealer,
			{
				serials: [cohort.serials[mi]],
				fault: covered ? 'Bank runs out of energy early' : 'Runs short in cloudy weeks',
				evidence: claimEvidenceSchema.parse({
					measuredCapacityAh: ah,
					measuredAtC: '21',
					throughputWh: String(Math.round(efc * 2300 * 4)),
					avgCellTempC: '24',
					description: covered
						? `A capacity test of this module gave ${ah} Ah; the bank no longer lasts the night.`
						: `The owner reports short evenings in cloudy weeks; a capacity test gave ${ah} Ah.`
				})
			},
			when
		);
		await moveClaim(
			db,
			officer,
			claim.id,
			{ to: 'in_review', comment: 'Capacity test and log received.' },
			plusDays(when, 2)
		);
		await decideClaim(
			db,
			officer,
			claim.id,
			{ decision: covered ? 'covered' : 'not_covered' },
			plusDays(when, 3)
		);
		if (covered) {
			const spare = cohort.spares[spareUsed[ci]++];
			await replaceModule(
				db,
				officer,
				claim.id,
				cohort.serials[mi],
				spare,
				undefined,
				plusDays(when, 10)
			);
			// The failed module came back, was inspected and scrapped: a closed return.
			const failed = cohort.serials[mi];
			const step = (input: ReturnActionInput, days: number) =>
				actOnReturn(db, officer, failed, input, undefined, plusDays(when, days));
			await step({ action: 'receive', condition: 'intact' }, 24);
			await step(
				{
					action: 'inspect',
					cause: 'cell_fade_premature',
					findings: 'Two cell groups below the warranted capacity for their cycle count.'
				},
				30
			);
			await step({ action: 'scrap', reason: 'Cells past reuse; sent to the recycler.' }, 31);
		}
	}
}
