// Adds an invented fleet of 200,000 modules (SEED_LARGE_COUNT) to DATABASE_URL: builds over
// two years, cell lots, factory results, shipments to the three demo dealers, sites with
// systems, commissioned warranties. All names are invented. Runs the demo seed first.
import { migrateDb, openDb, DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { seedDemo } from '$lib/server/seed/demo';
import { serialRun } from '$lib/domain/serial';
import { warrantyTermEnd } from '$lib/domain/warranty';

const N = Number(process.env.SEED_LARGE_COUNT ?? 200_000);
const url = process.env.DATABASE_URL || DEFAULT_DATABASE_URL;
const db = await openDb(url, process.env.DATABASE_AUTH_TOKEN);
await migrateDb(db);
await seedDemo(db, process.env.DEMO_PASSWORD || 'packledger-demo');
const c = db.$client;
const t0 = performance.now();

// A small deterministic generator, so two runs make the same fleet.
let seed = 20261201;
const rnd = () => (seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31;
const pick = <T>(xs: T[]) => xs[Math.floor(rnd() * xs.length)];

const models = (
	await c.execute(
		'SELECT id, code, variant, min_capacity_ah, rated_ah, max_dcir_mohm, warranty_years, rated_cycles, end_retention_pct, reference_temp_c, hot_temp_c, hot_rated_cycles, usable_wh FROM module_models'
	)
).rows;
const dealers = (
	await c.execute("SELECT id, name FROM organisations WHERE kind = 'dealer' ORDER BY id")
).rows.map((r) => Number(r.id));
const workshopId = Number(
	(await c.execute("SELECT id FROM users WHERE email = 'workshop@tidewater.example'")).rows[0].id
);
const techId = Number(
	(await c.execute("SELECT id FROM users WHERE email = 'tech@tidewater.example'")).rows[0].id
);
const now = Date.now();
const DAY = 86_400_000;

const json = (rows: unknown[]) => JSON.stringify(rows);
async function insertJson(table: string, columns: string[], rows: unknown[][]) {
	const fields = columns.map((_, i) => `value ->> ${i}`).join(', ');
	for (let i = 0; i < rows.length; i += 20_000)
		await c.execute({
			sql: `INSERT INTO ${table} (${columns.join(', ')}) SELECT ${fields} FROM json_each(?)`,
			args: [json(rows.slice(i, i + 20_000))]
		});
}

// 1. Serials per model, continuing each (variant, year) counter.
const perModel = Math.ceil(N / models.length);
type Mod = {
	serial: string;
	modelIdx: number;
	builtAt: number;
	state: string;
	dealer: number | null;
	lots: string[];
};
const mods: Mod[] = [];
for (let mi = 0; mi < models.length && mods.length < N; mi++) {
	const m = models[mi];
	for (const year of [2025, 2026]) {
		const count = Math.min(Math.ceil(perModel / 2), N - mods.length);
		const r = await c.execute({
			sql: `INSERT INTO serial_counters (variant, year, next) VALUES (?, ?, ?) ON CONFLICT DO UPDATE SET next = next + ? RETURNING next`,
			args: [m.variant, year, 1 + count, count]
		});
		const first = Number(r.rows[0].next) - count;
		const start = Date.parse(`${year}-01-01T00:00:00Z`);
		const span = Math.min(365 * DAY, now - start - 7 * DAY);
		for (const serial of serialRun(String(m.variant), year, first, count)) {
			const builtAt = start + Math.floor(rnd() * span);
			const lotWeek = new Date(builtAt).toISOString().slice(2, 10).replace(/-/g, '').slice(0, 4);
			const lots = [`HCL-${lotWeek}-${String.fromCharCode(65 + Math.floor(rnd() * 6))}`];
			if (rnd() < 0.3)
				lots.push(`HCL-${lotWeek}-${String.fromCharCode(71 + Math.floor(rnd() * 3))}`);
			const u = rnd();
			const age = (now - builtAt) / DAY;
			const state =
				age < 10 && u < 0.5
					? 'built'
					: u < 0.02
						? 'test_failed'
						: u < 0.17
							? 'in_stock'
							: u < 0.4
								? 'shipped'
								: u < 0.5
									? 'installed'
									: u < 0.985
										? 'commissioned'
										: u < 0.993
											? 'claim_open'
											: 'returned';
			mods.push({
				serial,
				modelIdx: mi,
				builtAt,
				state,
				dealer: ['shipped', 'installed', 'commissioned', 'claim_open', 'returned'].includes(state)
					? pick(dealers)
					: null,
				lots
			});
		}
	}
}
console.log(`Generating ${mods.length.toLocaleString('en-GB')} modules…`);

// 2. Shipments: per dealer and week, the modules shipped then.
const shipments = new Map<string, { ref: string; dealer: number; at: number; ids: number[] }>();
let shipNo = Number((await c.execute('SELECT count(*) AS n FROM shipments')).rows[0].n);
const firstId =
	Number((await c.execute('SELECT coalesce(max(id), 0) AS m FROM modules')).rows[0].m) + 1;
const moduleRows: unknown[][] = [];
const testRows: unknown[][] = [];
const lotRows: unknown[][] = [];
mods.forEach((m, i) => {
	const id = firstId + i;
	const model = models[m.modelIdx];
	const tested = m.state !== 'built';
	const testedAt = m.builtAt + DAY;
	const shippedAt = m.dealer ? Math.min(now - DAY, testedAt + Math.floor(rnd() * 60) * DAY) : null;
	const commissionedOn =
		['commissioned', 'claim_open', 'returned'].includes(m.state) && shippedAt
			? new Date(Math.min(now - DAY, shippedAt + 14 * DAY)).toISOString().slice(0, 10)
			: null;
	const pass = m.state !== 'test_failed';
	const cap = pass
		? Number(model.min_capacity_ah) + 0.3 + rnd() * 1.8
		: Number(model.min_capacity_ah) - 0.5 - rnd();
	if (shippedAt) {
		const key = `${m.dealer}:${Math.floor(shippedAt / (7 * DAY))}`;
		if (!shipments.has(key))
			shipments.set(key, {
				ref: `SH-${new Date(shippedAt).getUTCFullYear()}-L${String(++shipNo).padStart(5, '0')}`,
				dealer: m.dealer!,
				at: shippedAt,
				ids: []
			});
		shipments.get(key)!.ids.push(id);
	}
	const terms = commissionedOn
		? JSON.stringify({
				years: model.warranty_years,
				ratedCycles: model.rated_cycles,
				endRetentionPct: model.end_retention_pct,
				referenceTempC: model.reference_temp_c,
				hotTempC: model.hot_temp_c,
				hotRatedCycles: model.hot_rated_cycles,
				usableWh: model.usable_wh,
				ratedAh: model.rated_ah
			})
		: null;
	moduleRows.push([
		id,
		m.serial,
		model.id,
		m.state,
		m.dealer,
		m.builtAt,
		workshopId,
		JSON.stringify(m.lots),
		tested ? (pass ? 'pass' : 'fail') : null,
		tested ? testedAt : null,
		shippedAt,
		commissionedOn ? Date.parse(commissionedOn) : null,
		commissionedOn,
		commissionedOn ? warrantyTermEnd(commissionedOn, Number(model.warranty_years)) : null,
		terms,
		m.builtAt,
		now
	]);
	for (const lot of m.lots) lotRows.push([id, lot]);
	if (tested)
		testRows.push([
			id,
			`L|${m.serial}|${testedAt}`,
			testedAt,
			Math.round(cap * 100) / 100,
			Math.round(Number(model.max_dcir_mohm) * (0.7 + rnd() * 0.2) * 100) / 100,
			'measured',
			Math.round(4 + rnd() * 10),
			Math.round(300 + rnd() * 600),
			pass ? 'pass' : 'fail',
			pass
				? '[]'
				: JSON.stringify([
						{
							check: 'capacity',
							message: `Capacity ${cap.toFixed(1)} Ah below the ${model.min_capacity_ah} Ah minimum`
						}
					]),
			'RIG-1'
		]);
});
await insertJson(
	'modules',
	[
		'id',
		'serial',
		'model_id',
		'state',
		'dealer_org_id',
		'built_at',
		'built_by',
		'cell_lots',
		'test_outcome',
		'tested_at',
		'shipped_at',
		'commissioned_at',
		'warranty_starts_on',
		'warranty_ends_on',
		'warranty_terms',
		'created_at',
		'updated_at'
	],
	moduleRows
);
await insertJson('module_cell_lots', ['module_id', 'lot_code'], lotRows);
// One import per rig and test day (UTC), as the rig uploads its day's file: the fleet's
// `importId` filter then meets imports of a realistic size (a few hundred results).
const importOf = new Map<number, number>();
const perDay = new Map<number, number>();
for (const r of testRows) {
	const d = Math.floor(Number(r[2]) / DAY);
	perDay.set(d, (perDay.get(d) ?? 0) + 1);
}
const testDays = [...perDay.keys()].sort((a, b) => a - b);
const firstImport = Number(
	(await c.execute('SELECT coalesce(max(id), 0) + 1 AS id FROM imports')).rows[0].id
);
testDays.forEach((d, i) => importOf.set(d, firstImport + i));
await insertJson(
	'imports',
	[
		'id',
		'kind',
		'sha256',
		'file_name',
		'bytes',
		'uploaded_by',
		'uploader_label',
		'status',
		'rows_total',
		'accepted',
		'rejected',
		'duplicates',
		'errors',
		'created_at',
		'committed_at'
	],
	testDays.map((d) => {
		const n = perDay.get(d)!;
		const day = new Date(d * DAY).toISOString().slice(0, 10);
		return [
			importOf.get(d),
			'factory_tests',
			`large-${day}`.padEnd(64, '0'),
			`rig-1-${day}.csv`,
			n * 80,
			workshopId,
			'RIG-1 (invented fleet)',
			'committed',
			n,
			n,
			0,
			0,
			'[]',
			d * DAY + 20 * 3_600_000,
			d * DAY + 20 * 3_600_000
		];
	})
);
for (const r of testRows) r.push(importOf.get(Math.floor(Number(r[2]) / DAY))!);
await insertJson(
	'factory_tests',
	[
		'module_id',
		'row_key',
		'tested_at',
		'capacity_ah',
		'dcir_mohm',
		'dcir_source',
		'cell_spread_mv',
		'insulation_mohm',
		'outcome',
		'failures',
		'rig',
		'import_id'
	],
	testRows
);
const shipmentList = [...shipments.values()];
for (const s of shipmentList) {
	const r = await c.execute({
		sql: "INSERT INTO shipments (reference, dealer_org_id, status, created_by, created_at, dispatched_at, dispatched_by) VALUES (?, ?, 'dispatched', ?, ?, ?, ?) RETURNING id",
		args: [s.ref, s.dealer, workshopId, s.at - DAY, s.at, workshopId]
	});
	(s as unknown as { id: number }).id = Number(r.rows[0].id);
}
await insertJson(
	'shipment_items',
	['shipment_id', 'module_id', 'created_at'],
	shipmentList.flatMap((s) =>
		s.ids.map((id) => [(s as unknown as { id: number }).id, id, s.at - DAY])
	)
);

// 3. Sites and systems: installed modules grouped 4 per system (1 string of 4), one system per site.
const placed = moduleRows.filter((r) =>
	['installed', 'commissioned', 'claim_open'].includes(r[3] as string)
);
const byDealerModel = new Map<string, unknown[][]>();
for (const r of placed)
	byDealerModel.set(`${r[4]}:${r[2]}`, [...(byDealerModel.get(`${r[4]}:${r[2]}`) ?? []), r]);
const places = [
	'Willow Lane',
	'Heron Point',
	'Quarry Road',
	'Fenwick Farm',
	'Mast Hill',
	'Gull Cove',
	'Lantern Row',
	'Oakridge',
	'Brine Flats',
	'Cobble End'
];
const apps = ['off_grid_home', 'backup', 'ups', 'workshop', 'telecom'];
let siteNo = 0;
const firstSite =
	Number((await c.execute('SELECT coalesce(max(id), 0) AS m FROM sites')).rows[0].m) + 1;
const firstSystem =
	Number((await c.execute('SELECT coalesce(max(id), 0) AS m FROM systems')).rows[0].m) + 1;
const siteRows: unknown[][] = [];
const systemRows: unknown[][] = [];
const slotRows: unknown[][] = [];
const systemOf: [number, number][] = [];
for (const [key, rows] of byDealerModel) {
	const [dealer, modelId] = key.split(':').map(Number);
	for (let i = 0; i < rows.length; i += 4) {
		const group = rows.slice(i, i + 4);
		const siteId = firstSite + siteNo;
		const systemId = firstSystem + siteNo;
		siteNo++;
		siteRows.push([
			siteId,
			dealer,
			`${pick(places)} ${siteNo}`,
			`Owner ${siteNo}`,
			`owner${siteNo}@homes.example`,
			`${siteNo} ${pick(places)}, Port Halden district`,
			pick(apps),
			techId,
			now
		]);
		const commissioned = group.every((g) => g[3] !== 'installed');
		systemRows.push([
			systemId,
			siteId,
			'Main bank',
			modelId,
			1,
			group.length,
			10,
			400,
			commissioned ? 'commissioned' : 'planned',
			now
		]);
		group.forEach((g, k) => {
			slotRows.push([systemId, k + 1, 1, g[0]]);
			systemOf.push([g[0] as number, systemId]);
		});
	}
}
await insertJson(
	'sites',
	[
		'id',
		'dealer_org_id',
		'name',
		'owner_name',
		'owner_contact',
		'address',
		'application',
		'created_by',
		'created_at'
	],
	siteRows
);
await insertJson(
	'systems',
	[
		'id',
		'site_id',
		'name',
		'model_id',
		'series',
		'parallel',
		'inverter_min_v',
		'inverter_max_v',
		'status',
		'created_at'
	],
	systemRows
);
await insertJson('system_slots', ['system_id', 'string_no', 'position', 'module_id'], slotRows);
for (let i = 0; i < systemOf.length; i += 20_000)
	await c.execute({
		sql: 'UPDATE modules SET system_id = s.sid FROM (SELECT value ->> 0 AS mid, value ->> 1 AS sid FROM json_each(?)) AS s WHERE modules.id = s.mid',
		args: [json(systemOf.slice(i, i + 20_000))]
	});
await c.execute('ANALYZE');
console.log(
	`Seeded ${mods.length.toLocaleString('en-GB')} modules, ${testRows.length.toLocaleString('en-GB')} factory results, ${shipmentList.length} shipments, ${siteNo} sites in ${((performance.now() - t0) / 1000).toFixed(1)} s (${url})`
);
c.close();
process.exit(0);
