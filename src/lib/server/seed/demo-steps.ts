/**
 * Steps the demo seed repeats for every production run: allocate, build, test through a rig
 * file, ship, and the commissioning measurements of a 48 V bank. All through the real services.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, modules, organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { allocateSerials } from '$lib/server/services/allocations';
import { registerBuild } from '$lib/server/services/builds';
import { commitImport, previewImport } from '$lib/server/services/imports';
import { addRangeToShipment } from '$lib/server/services/shipment-packing';
import { createShipment } from '$lib/server/services/shipments';
import { dispatchShipment } from '$lib/server/services/shipment-dispatch';
import { commissioningSchema } from '$lib/schemas/commissioning';
import { BUILD_CHECKS } from '$lib/schemas/build';
import { getModelIdByCode } from './demo-actors';

const CHECKS = BUILD_CHECKS.map((c) => c.key);
export const at = (iso: string) => new Date(iso);

export async function run(
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
export async function buildAndTest(
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

export async function ship(
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

export const measurements = (series: number, parallel: number, insulation = '120') => {
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
