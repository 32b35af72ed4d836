/**
 * Claims need commissioned modules with a warranty: a system of TC-HC-48 modules in one string
 * at a Saltmarsh Solar site, commissioned (a passing commissioning on record) with the warranty
 * terms snapshot the commissioning stores.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { commissionings, modules, sites, systemSlots, systems } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { assignToDealer, makeModules, modelId } from './modules';

export const TERMS = {
	years: 15,
	ratedCycles: 20000,
	endRetentionPct: 80,
	referenceTempC: 25,
	hotTempC: 55,
	hotRatedCycles: 4000
};

export interface CommissionedSystemOptions {
	dealer?: string;
	count?: number;
	startsOn?: string;
	terms?: object;
	stopCharge?: 'pass' | 'fail';
}

let certificate = 0;

/** A commissioned system of `count` TC-HC-48 modules in one string, with its warranty snapshot and a passing commissioning. */
export async function commissionedSystem(
	db: Db,
	by: { workshop: Actor; admin: Actor; tech: Actor },
	opts: CommissionedSystemOptions = {}
) {
	const { workshop, admin, tech } = by;

	const n = opts.count ?? 4;
	const startsOn = opts.startsOn ?? '2022-03-01';
	const serials = await makeModules(db, workshop, { count: n });
	const dealerOrgId = await assignToDealer(db, serials, opts.dealer ?? 'Saltmarsh Solar');
	const [site] = await db
		.insert(sites)
		.values({
			dealerOrgId,
			name: 'Heron Point cabin',
			ownerName: 'A. Owner',
			ownerContact: 'owner@example.invalid',
			address: '1 Shore Lane, Port Halden',
			application: 'off_grid_home',
			createdBy: admin.userId!
		})
		.returning();
	const [system] = await db
		.insert(systems)
		.values({
			siteId: site.id,
			name: 'House bank',
			modelId: await modelId(db, 'TC-HC-48'),
			series: n,
			parallel: 1,
			inverterMinV: 40 * n,
			inverterMaxV: 62 * n,
			status: 'commissioned'
		})
		.returning();
	const endsOn = `${Number(startsOn.slice(0, 4)) + 15}${startsOn.slice(4)}`;
	for (const [i, serial] of serials.entries()) {
		const [m] = await db
			.update(modules)
			.set({
				state: 'commissioned',
				systemId: system.id,
				commissionedAt: new Date(`${startsOn}T12:00:00Z`),
				warrantyStartsOn: startsOn,
				warrantyEndsOn: endsOn,
				warrantyTerms: JSON.stringify(opts.terms ?? TERMS)
			})
			.where(eq(modules.serial, serial))
			.returning();
		await db
			.insert(systemSlots)
			.values({ systemId: system.id, stringNo: 1, position: i + 1, moduleId: m.id });
	}
	await db.insert(commissionings).values({
		systemId: system.id,
		certificateNo: `PLC-TEST-${++certificate}`,
		overall: 'pass',
		technicianUserId: tech.userId!,
		technicianName: 'Ilse Fenwick',
		licenceNumber: 'EL-1234',
		measurements: '{}',
		items: JSON.stringify([
			{
				key: 'stop_charge',
				label: 'Stop-charge signal',
				status: opts.stopCharge ?? 'pass',
				reason: ''
			}
		]),
		commissionedOn: startsOn
	});
	return { serials, systemId: system.id, dealerOrgId, endsOn, startsOn };
}
