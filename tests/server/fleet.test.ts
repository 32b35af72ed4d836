import { beforeAll, describe, expect, it } from 'vitest';
import { eq, inArray } from 'drizzle-orm';
import Papa from 'papaparse';
import type { Db } from '$lib/server/db';
import {
	factoryTests,
	imports,
	moduleModels,
	modules,
	organisations,
	sites,
	systems,
	users
} from '$lib/server/db/schema';
import {
	exportModules,
	getColumnPrefs,
	listModules,
	listModulesJson,
	setColumnPrefs,
	type FleetItem
} from '$lib/server/services/fleet';
import {
	FLEET_SORTS,
	FLEET_STATES,
	fleetQuerySchema,
	parseFleetQuery,
	type FleetQuery
} from '$lib/schemas/fleet';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { openDb } from '$lib/server/db/client';
import { assignToDealer, makeModules } from '../factories/modules';

let db: Db;
let staff: Actor;
let saltmarsh: Actor;
let ids: Map<string, number>;
let ridgelineId: number;
let saltmarshId: number;
let importId: number;
const s48: string[] = [];
const s24: string[] = [];
const s12: string[] = [];
const day = (d: string) => new Date(`${d}T09:00:00Z`);
const q = (raw: Record<string, unknown> = {}): FleetQuery =>
	fleetQuerySchema.parse({ pageSize: 200, ...raw });
const serials = (r: { items: FleetItem[] }) => r.items.map((i) => i.serial);

beforeAll(async () => {
	db = await createSeededDb();
	const workshop = await actorFor(db, 'workshop@tidewater.example');
	staff = await actorFor(db, 'admin@tidewater.example');
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	s48.push(
		...(await makeModules(db, workshop, {
			code: 'TC-HC-48',
			count: 6,
			built: 5,
			lots: ['HCL-2611-A']
		}))
	);
	s24.push(
		...(await makeModules(db, workshop, {
			code: 'TC-HC-24',
			count: 4,
			built: 4,
			lots: ['HCL-2611-B', 'HCL-2611-C']
		}))
	);
	s12.push(
		...(await makeModules(db, workshop, {
			code: 'TC-HC-12',
			count: 3,
			built: 2,
			lots: ['HCL-2612-A']
		}))
	);
	// Distinct build dates, some tests, a range of states.
	const dates: [string, string, string | null][] = [
		[s48[0], '2026-01-05', '2026-01-06'],
		[s48[1], '2026-01-20', '2026-01-21'],
		[s48[2], '2026-02-03', '2026-02-04'],
		[s48[3], '2026-02-17', '2026-02-18'],
		[s48[4], '2026-03-02', null],
		[s24[0], '2026-01-12', '2026-01-13'],
		[s24[1], '2026-02-10', '2026-02-11'],
		[s24[2], '2026-03-09', '2026-03-10'],
		[s24[3], '2026-03-16', null],
		[s12[0], '2026-01-28', '2026-01-29'],
		[s12[1], '2026-02-24', null]
	];
	for (const [s, built, tested] of dates) {
		await db
			.update(modules)
			.set({
				builtAt: day(built),
				testedAt: tested ? day(tested) : null,
				testOutcome: tested ? 'pass' : null,
				state: tested ? 'in_stock' : 'built'
			})
			.where(eq(modules.serial, s));
	}
	await db
		.update(modules)
		.set({ state: 'test_failed', testOutcome: 'fail' })
		.where(eq(modules.serial, s48[3]));
	saltmarshId = await assignToDealer(db, [s48[0], s48[1], s24[1]], 'Saltmarsh Solar');
	ridgelineId = await assignToDealer(db, [s24[0], s24[2]], 'Ridgeline Off-Grid Supply');
	await assignToDealer(db, [s12[0]], 'Northbank Electrical');
	for (const [s, shipped] of [
		[s48[0], '2026-02-01'],
		[s48[1], '2026-02-15'],
		[s24[1], '2026-03-01'],
		[s24[0], '2026-01-25'],
		[s24[2], '2026-03-20'],
		[s12[0], '2026-02-05']
	]) {
		await db
			.update(modules)
			.set({ shippedAt: day(shipped) })
			.where(eq(modules.serial, s));
	}
	// A Saltmarsh site whose name would run as a formula in a spreadsheet.
	const [admin] = await db.select().from(users).where(eq(users.email, 'admin@tidewater.example'));
	const [site] = await db
		.insert(sites)
		.values({
			dealerOrgId: saltmarshId,
			name: '=HYPERLINK("http://evil.example","Boatshed")',
			ownerName: 'R. Quill',
			ownerContact: 'r@example.org',
			address: '1 Quay',
			application: 'backup',
			createdBy: admin.id
		})
		.returning();
	const [model48] = await db.select().from(moduleModels).where(eq(moduleModels.code, 'TC-HC-48'));
	const [sys] = await db
		.insert(systems)
		.values({
			siteId: site.id,
			name: 'Shed bank',
			modelId: model48.id,
			series: 1,
			parallel: 2,
			inverterMinV: 40,
			inverterMaxV: 60
		})
		.returning();
	await db
		.update(modules)
		.set({ systemId: sys.id, state: 'installed' })
		.where(eq(modules.serial, s48[0]));
	// An import that tested two of the 24 V modules.
	const [imp] = await db
		.insert(imports)
		.values({
			kind: 'factory_tests',
			sha256: 'f'.repeat(64),
			fileName: 'rig.csv',
			bytes: 10,
			uploaderLabel: 'test',
			status: 'committed',
			rowsTotal: 2,
			accepted: 2,
			rejected: 0,
			duplicates: 0,
			errors: '[]'
		})
		.returning();
	importId = imp.id;
	const rows = await db
		.select()
		.from(modules)
		.where(inArray(modules.serial, [s24[0], s24[1]]));
	for (const m of rows) {
		await db.insert(factoryTests).values({
			moduleId: m.id,
			importId,
			rowKey: `${m.serial}-k`,
			testedAt: m.testedAt!,
			capacityAh: 92,
			dcirMohm: 3,
			dcirSource: 'measured',
			cellSpreadMv: 8,
			insulationMohm: 500,
			outcome: 'pass',
			failures: '[]'
		});
	}
	ids = new Map(
		(await db.select({ id: modules.id, serial: modules.serial }).from(modules)).map((r) => [
			r.serial,
			r.id
		])
	);
});

describe('the view in the URL', () => {
	it('fills defaults, reads empty parameters as no filter, names each bad parameter', () => {
		const ok = parseFleetQuery(new URLSearchParams('state=&q=&page=2'));
		expect(ok.success && ok.data).toEqual({ page: 2, pageSize: 50, sort: 'builtAt', dir: 'desc' });
		const bad = parseFleetQuery(
			new URLSearchParams(
				'pageSize=0&sort=colour&state=lost&builtFrom=2026-02-30&dir=up&q=' + 'X'.repeat(41)
			)
		);
		expect(bad.success).toBe(false);
		const paths = bad.error!.issues.map((i) => i.path.join('.'));
		expect(paths).toEqual(
			expect.arrayContaining(['pageSize', 'sort', 'state', 'builtFrom', 'dir', 'q'])
		);
		// Page size: 1 to 500 rows, both ends included (README, API).
		for (const [size, ok] of [
			['1', true],
			['500', true],
			['0', false],
			['501', false],
			['2.5', false]
		] as const)
			expect(parseFleetQuery(new URLSearchParams(`pageSize=${size}`)).success, size).toBe(ok);
		const reversed = parseFleetQuery(
			new URLSearchParams('builtFrom=2026-03-01&builtTo=2026-02-01')
		);
		expect(reversed.error?.issues[0].path).toEqual(['builtTo']);
	});
});

describe('listModules', () => {
	it('pages with a total, a short last page and an empty page past the end', async () => {
		const all = await listModules(db, staff, q());
		expect(all.total).toBe(13);
		const p1 = await listModules(db, staff, q({ pageSize: 10 }));
		const p2 = await listModules(db, staff, q({ pageSize: 10, page: 2 }));
		expect([p1.total, p1.items.length, p2.items.length]).toEqual([13, 10, 3]);
		expect([...serials(p1), ...serials(p2)]).toEqual(serials(all));
		const past = await listModules(db, staff, q({ pageSize: 10, page: 3 }));
		expect(past).toEqual({ items: [], total: 13, page: 3, pageSize: 10 });
	});

	it('returns each row with model, dealer, dates, test result, cell lots and site', async () => {
		const { items } = await listModules(db, staff, q({ q: s48[0] }));
		expect(items).toEqual([
			{
				serial: s48[0],
				state: 'installed',
				model: 'TC-HC-48',
				dealer: 'Saltmarsh Solar',
				builtAt: day('2026-01-05'),
				testedAt: day('2026-01-06'),
				testOutcome: 'pass',
				shippedAt: day('2026-02-01'),
				cellLots: ['HCL-2611-A'],
				site: '=HYPERLINK("http://evil.example","Boatshed")'
			}
		]);
	});

	it('filters by state, model, dealer, build dates, cell lot and import', async () => {
		const set = async (raw: Record<string, unknown>) =>
			serials(await listModules(db, staff, q(raw))).sort();
		expect(await set({ state: 'test_failed' })).toEqual([s48[3]]);
		expect(await set({ state: 'allocated' })).toEqual([s48[5], s12[2]].sort());
		expect(await set({ model: 'TC-HC-24' })).toEqual([...s24].sort());
		expect(await set({ model: 'TC-HC-99' })).toEqual([]);
		expect(await set({ dealer: ridgelineId })).toEqual([s24[0], s24[2]].sort());
		expect(await set({ builtFrom: '2026-02-01', builtTo: '2026-02-28' })).toEqual(
			[s48[2], s48[3], s24[1], s12[1]].sort()
		);
		expect(await set({ builtFrom: '2026-03-09' })).toEqual([s24[2], s24[3]].sort());
		expect(await set({ builtTo: '2026-01-05' })).toEqual([s48[0]]);
		expect(await set({ lot: 'HCL-2611-C' })).toEqual([...s24].sort());
		expect(await set({ lot: 'HCL-2611-A' })).toEqual(s48.slice(0, 5).sort());
		expect(await set({ importId })).toEqual([s24[0], s24[1]].sort());
		expect(await set({ state: 'shipped', model: 'TC-HC-24' })).toEqual(s24.slice(0, 3).sort());
	});

	it('finds serials by their start (any case) or by text inside them', async () => {
		const set = async (text: string) =>
			serials(await listModules(db, staff, q({ q: text }))).sort();
		expect(await set('PL24')).toEqual([...s24].sort());
		expect(await set(' pl12- ')).toEqual([...s12].sort());
		expect(await set(s48[2].toLowerCase())).toEqual([s48[2]]);
		const tail = s48[4].slice(-7); // running number and check character
		expect(await set(tail)).toEqual([s48[4]]);
		expect(await set('ZZZ')).toEqual([]);
	});

	it('sorts by every sortable column both ways, blanks last, ties by id', async () => {
		const all = (await listModules(db, staff, q())).items;
		const key: Record<string, (i: FleetItem) => string | number | null> = {
			serial: (i) => i.serial,
			model: (i) => i.model,
			state: (i) => FLEET_STATES.indexOf(i.state),
			dealer: (i) => i.dealer,
			builtAt: (i) => i.builtAt?.getTime() ?? null,
			testedAt: (i) => i.testedAt?.getTime() ?? null,
			shippedAt: (i) => i.shippedAt?.getTime() ?? null
		};
		for (const sort of FLEET_SORTS) {
			for (const dir of ['asc', 'desc'] as const) {
				const sign = dir === 'asc' ? 1 : -1;
				const expected = [...all].sort((a, b) => {
					const [x, y] = [key[sort](a), key[sort](b)];
					if (x !== y) {
						if (x === null) return 1;
						if (y === null) return -1;
						return (x < y ? -1 : 1) * sign;
					}
					return (ids.get(a.serial)! - ids.get(b.serial)!) * sign;
				});
				const got = await listModules(db, staff, q({ sort, dir }));
				expect(serials(got), `${sort} ${dir}`).toEqual(expected.map((i) => i.serial));
				const paged = [1, 2].map((page) =>
					listModules(db, staff, q({ sort, dir, pageSize: 10, page }))
				);
				expect((await Promise.all(paged)).flatMap(serials), `${sort} ${dir} paged`).toEqual(
					expected.map((i) => i.serial)
				);
			}
		}
	});
});

describe('dealer scope', () => {
	const mine = () => [s48[0], s48[1], s24[1]].sort();

	it('shows a dealer only their own units, whatever filter or search is sent', async () => {
		const own = await listModules(db, saltmarsh, q());
		expect(own.total).toBe(3);
		expect(serials(own).sort()).toEqual(mine());
		expect(await listModules(db, saltmarsh, q({ dealer: ridgelineId }))).toMatchObject({
			total: 0,
			items: []
		});
		expect(await listModules(db, saltmarsh, q({ q: s24[0] }))).toMatchObject({
			total: 0,
			items: []
		});
		expect((await listModules(db, saltmarsh, q({ q: 'PL' }))).total).toBe(3);
		expect(
			await listModules(db, saltmarsh, q({ lot: 'HCL-2611-C', dealer: ridgelineId }))
		).toMatchObject({ total: 0 });
		expect(serials(await listModules(db, saltmarsh, q({ importId })))).toEqual([s24[1]]);
		expect((await listModules(db, saltmarsh, q({ dealer: saltmarshId }))).total).toBe(3);
	});

	it('exports only their own units too', async () => {
		const csvSerials = async (raw: Record<string, unknown>) =>
			Papa.parse<string[]>((await exportModules(db, saltmarsh, q(raw))).replace(/^\uFEFF/, ''), {
				skipEmptyLines: true
			})
				.data.slice(1)
				.map((r) => r[0])
				.sort();
		expect(await csvSerials({})).toEqual(mine());
		expect(await csvSerials({ dealer: ridgelineId })).toEqual([]);
		expect(await csvSerials({ q: s24[0] })).toEqual([]);
	});
});

describe('counts kept between requests', () => {
	it('follow writes from this process and from a second app server on the same file', async () => {
		const a = await createSeededDb();
		const url = (await a.$client.execute('PRAGMA database_list')).rows[0].file as string;
		const b = await openDb(`file:${url}`);
		const admin = await actorFor(a, 'admin@tidewater.example');
		const workshop = await actorFor(a, 'workshop@tidewater.example');
		const count = async (db: Db) => (await listModules(db, admin, q({ model: 'TC-HC-12' }))).total;
		expect(await count(a)).toBe(0);
		expect(await count(a)).toBe(0); // now kept
		// A write through this process's own pool …
		await makeModules(a, workshop, { code: 'TC-HC-12', count: 2 });
		expect(await count(a)).toBe(2);
		// Text inside a serial that nothing has yet: its (empty) list of matches is kept now.
		expect((await listModules(a, admin, q({ q: '900002' }))).total).toBe(0);
		// … and one by another process (its own client on the same file).
		expect(await count(b)).toBe(2);
		await b.$client.execute({
			sql: `INSERT INTO modules (serial, model_id, state) SELECT 'PL12-26-' || printf('%06d', 900000 + value) || 'X', (SELECT id FROM module_models WHERE code = 'TC-HC-12'), 'allocated' FROM json_each('[1,2,3]')`
		});
		expect(await count(a)).toBe(5);
		expect(await count(b)).toBe(5);
		// The trigram index follows inserts made outside the services too.
		expect((await listModules(a, admin, q({ q: '900002' }))).items.map((i) => i.serial)).toEqual([
			'PL12-26-900002X'
		]);
	});

	it('keeps the ordered list of a few matches only for the data version it was read at', async () => {
		const a = await createSeededDb();
		const url = (await a.$client.execute('PRAGMA database_list')).rows[0].file as string;
		const b = await openDb(`file:${url}`);
		const admin = await actorFor(a, 'admin@tidewater.example');
		const workshop = await actorFor(a, 'workshop@tidewater.example');
		const made = await makeModules(a, workshop, { count: 3, built: 3, lots: ['HCL-2699-Q'] });
		const view = (raw: Record<string, unknown>) =>
			listModules(a, admin, q({ lot: 'HCL-2699-Q', pageSize: 2, ...raw }), { keep: false });
		const bySerial = { sort: 'serial', dir: 'asc' } as const;
		expect(serials(await view(bySerial))).toEqual(made.slice(0, 2));
		expect(serials(await view({ ...bySerial, page: 2 }))).toEqual(made.slice(2));
		// Sorted by state (all built: ties by id): a few matches of a list filter, kept per state.
		expect(serials(await view({ sort: 'state', dir: 'asc' }))).toEqual(made.slice(0, 2));
		// Another app server moves the first one to the end of both orders: the lists kept at the
		// older version are not given again (the pages are not kept: `keep: false`).
		await b.$client.execute({
			sql: `UPDATE modules SET serial = 'PL99-99-999999Z', state = 'scrapped' WHERE serial = ?`,
			args: [made[0]]
		});
		expect(serials(await view(bySerial))).toEqual([made[1], made[2]]);
		expect(serials(await view({ ...bySerial, page: 2 }))).toEqual(['PL99-99-999999Z']);
		expect(serials(await view({ sort: 'state', dir: 'asc' }))).toEqual([made[1], made[2]]);
		expect(serials(await view({ sort: 'state', dir: 'desc' }))).toEqual([
			'PL99-99-999999Z',
			made[2]
		]);
		// A module added to the lot by this process's own pool is counted and listed at once.
		const [extra] = await makeModules(a, workshop, { count: 1, built: 1, lots: ['HCL-2699-Q'] });
		const last = await view({ ...bySerial, page: 2 });
		expect(last.total).toBe(4);
		expect(serials(last)).toEqual([extra, 'PL99-99-999999Z']);
	});

	it('keeps a whole page only for the same scope, view and data version', async () => {
		const a = await createSeededDb();
		const url = (await a.$client.execute('PRAGMA database_list')).rows[0].file as string;
		const b = await openDb(`file:${url}`);
		const workshop = await actorFor(a, 'workshop@tidewater.example');
		const admin = await actorFor(a, 'admin@tidewater.example');
		const salt = await actorFor(a, 'dealer@saltmarsh.example');
		const ridge = await actorFor(a, 'dealer@ridgeline.example');
		const made = await makeModules(a, workshop, { code: 'TC-HC-24', count: 4 });
		await assignToDealer(a, made.slice(0, 2), 'Saltmarsh Solar');
		await assignToDealer(a, made.slice(2), 'Ridgeline Off-Grid Supply');
		const view = q({ sort: 'serial', dir: 'asc' });
		const json = (actor: Actor, keep = true) => listModulesJson(a, actor, view, { keep });
		const listed = async (actor: Actor) =>
			(JSON.parse(await json(actor)) as { items: { serial: string; state: string }[] }).items;
		// Each dealer's first request after the other's: their own units, never the other's page.
		expect((await listed(salt)).map((i) => i.serial)).toEqual(made.slice(0, 2));
		expect((await listed(ridge)).map((i) => i.serial)).toEqual(made.slice(2));
		expect((await listed(salt)).map((i) => i.serial)).toEqual(made.slice(0, 2));
		expect(await json(salt)).toBe(await json(salt, false));
		// A change of a listed row by another app server (its own connection) shows at once:
		// the kept page was of an older data version.
		expect((await listed(salt))[0].state).toBe('shipped');
		await b.$client.execute({
			sql: `UPDATE modules SET state = 'installed' WHERE serial = ?`,
			args: [made[0]]
		});
		expect((await listed(salt))[0].state).toBe('installed');
		expect((await listed(admin)).find((i) => i.serial === made[0])?.state).toBe('installed');
		// A write by this process's own pool too.
		await a.update(modules).set({ state: 'returned' }).where(eq(modules.serial, made[1]));
		expect((await listed(salt))[1].state).toBe('returned');
		expect(await json(salt)).toBe(await json(salt, false));
	});

	it('gives instants exactly as Date.prototype.toISOString does (the JSON of a Date)', async () => {
		const c = await createSeededDb();
		const admin = await actorFor(c, 'admin@tidewater.example');
		// Milliseconds on both sides of midnight, the year 2000 and 2028 leap days, a far year
		// (the reference: the engine's own Date.prototype.toISOString, ECMA-262 §21.4.4.36).
		const ms = [
			0,
			1,
			999,
			Date.UTC(2000, 1, 29, 23, 59, 59, 999),
			Date.UTC(2028, 1, 29, 0, 0, 0, 1),
			Date.UTC(2026, 11, 31, 23, 59, 59, 998),
			Date.UTC(2099, 6, 1, 12, 30, 15, 123),
			...Array.from({ length: 200 }, (_, i) => 1_700_000_000_000 + i * 86_399_997)
		];
		await c.$client.execute({
			sql: `INSERT INTO modules (serial, model_id, state, built_at, tested_at, shipped_at)
				SELECT 'PL12-26-' || printf('%06d', 700000 + key) || 'T', (SELECT id FROM module_models WHERE code = 'TC-HC-12'), 'in_stock', value, value + 1, CASE WHEN key % 2 = 0 THEN value + 86400000 END
				FROM json_each(?)`,
			args: [JSON.stringify(ms)]
		});
		const page = JSON.parse(
			await listModulesJson(
				c,
				admin,
				q({ q: 'PL12-26-7', sort: 'serial', dir: 'asc', pageSize: 500 })
			)
		) as { items: Record<'builtAt' | 'testedAt' | 'shippedAt', string | null>[] };
		expect(page.items.map((i) => i.builtAt)).toEqual(ms.map((m) => new Date(m).toISOString()));
		expect(page.items.map((i) => i.testedAt)).toEqual(ms.map((m) => new Date(m + 1).toISOString()));
		expect(page.items.map((i) => i.shippedAt)).toEqual(
			ms.map((m, i) => (i % 2 === 0 ? new Date(m + 86_400_000).toISOString() : null))
		);
	});
});

describe('exportModules', () => {
	it('writes a header, every matching row in the table order, and neutralises formula-looking cells', async () => {
		const csv = await exportModules(db, staff, q({ sort: 'serial', dir: 'asc' }));
		expect(csv.startsWith('\uFEFF')).toBe(true);
		const rows = Papa.parse<string[]>(csv.slice(1), { skipEmptyLines: true }).data;
		expect(rows[0]).toEqual([
			'serial',
			'model',
			'state',
			'state_label',
			'dealer',
			'built_at',
			'tested_at',
			'test_outcome',
			'shipped_at',
			'cell_lots',
			'site'
		]);
		const listed = await listModules(db, staff, q({ sort: 'serial', dir: 'asc' }));
		expect(rows.slice(1).map((r) => r[0])).toEqual(serials(listed));
		const boatshed = rows.find((r) => r[0] === s48[0])!;
		expect(boatshed).toEqual([
			s48[0],
			'TC-HC-48',
			'installed',
			'Installed',
			'Saltmarsh Solar',
			'2026-01-05T09:00:00.000Z',
			'2026-01-06T09:00:00.000Z',
			'pass',
			'2026-02-01T09:00:00.000Z',
			'HCL-2611-A',
			`'=HYPERLINK("http://evil.example","Boatshed")`
		]);
		expect(rows.slice(1).every((r) => !/^[=+\-@]/.test(r.join('')))).toBe(true);
		const filtered = await exportModules(
			db,
			staff,
			q({ model: 'TC-HC-12', sort: 'builtAt', dir: 'asc' })
		);
		expect(
			Papa.parse<string[]>(filtered.slice(1), { skipEmptyLines: true })
				.data.slice(1)
				.map((r) => r[0])
		).toEqual([s12[0], s12[1], s12[2]]);
	});
});

describe('column preferences', () => {
	it('are null until chosen, keep the serial, and refuse unknown columns', async () => {
		const [u] = await db.select().from(users).where(eq(users.email, 'dealer@saltmarsh.example'));
		expect(await getColumnPrefs(db, u.id)).toBeNull();
		expect(await setColumnPrefs(db, u.id, ['site', 'state'])).toEqual(['serial', 'state', 'site']);
		expect(await getColumnPrefs(db, u.id)).toEqual(['serial', 'state', 'site']);
		expect(await setColumnPrefs(db, u.id, ['cellLots'])).toEqual(['serial', 'cellLots']);
		await expect(setColumnPrefs(db, u.id, ['ownerName'])).rejects.toThrow(
			/Unknown column ownerName/
		);
		expect(await getColumnPrefs(db, u.id)).toEqual(['serial', 'cellLots']);
	});
});

/**
 * A register big enough that the service walks the sort's index for common matches and
 * falls back to gathering when matches bunch at the end: every page must equal the plain
 * answer worked out here in JavaScript.
 */
describe('a larger register', () => {
	let big: Db;
	let rows: {
		id: number;
		serial: string;
		state: string;
		modelId: number;
		dealer: number | null;
		builtAt: number | null;
		shippedAt: number | null;
	}[];
	let dealers: number[];
	let bigDealer: Actor;
	let codeOf: Map<number, string>;
	let nameOf: Map<number, string>;

	beforeAll(async () => {
		big = await createSeededDb();
		const modelRows = await big.select().from(moduleModels);
		const models = modelRows.map((m) => m.id);
		codeOf = new Map(modelRows.map((m) => [m.id, m.code]));
		const orgRows = await big.select().from(organisations);
		nameOf = new Map(orgRows.map((o) => [o.id, o.name]));
		dealers = orgRows.filter((o) => o.kind === 'dealer').map((o) => o.id);
		bigDealer = await actorFor(big, 'dealer@ridgeline.example');
		const states = ['allocated', 'in_stock', 'shipped', 'commissioned'];
		let seed = 7;
		const rnd = () => (seed = (seed * 48271) % 2147483647) / 2147483647;
		rows = Array.from({ length: 8000 }, (_, i) => {
			const state = states[Math.floor(rnd() * 4)];
			const atDealer = state === 'shipped' || state === 'commissioned';
			const builtAt =
				state === 'allocated'
					? null
					: Date.UTC(2025, 0, 1) + i * 3_600_000 + Math.floor(rnd() * 3) * 60_000;
			const variant = ['12', '24', '48'][i % 3];
			return {
				id: i + 1,
				serial: `PL${variant}-25-${String(i + 1).padStart(6, '0')}K`,
				state,
				modelId: models[i % 3],
				dealer: atDealer ? dealers[Math.floor(rnd() * dealers.length)] : null,
				builtAt,
				shippedAt: atDealer ? builtAt! + Math.floor(rnd() * 30) * 86_400_000 : null
			};
		});
		for (let i = 0; i < rows.length; i += 500) {
			const chunk = rows.slice(i, i + 500);
			await big.$client.execute({
				sql: `INSERT INTO modules (id, serial, model_id, state, dealer_org_id, built_at, shipped_at) VALUES ${chunk.map(() => '(?,?,?,?,?,?,?)').join(',')}`,
				args: chunk.flatMap((r) => [
					r.id,
					r.serial,
					r.modelId,
					r.state,
					r.dealer,
					r.builtAt,
					r.shippedAt
				])
			});
		}
	});

	it('gives the same pages as a plain sort of the matches', async () => {
		const cases: [Actor | null, Record<string, unknown>, (r: (typeof rows)[number]) => boolean][] =
			[
				[null, { state: 'in_stock' }, (r) => r.state === 'in_stock'],
				[null, { state: 'allocated' }, (r) => r.state === 'allocated'],
				[null, { state: 'allocated', sort: 'builtAt', dir: 'asc' }, (r) => r.state === 'allocated'],
				[
					null,
					{ dealer: dealers[0], sort: 'shippedAt', dir: 'asc' },
					(r) => r.dealer === dealers[0]
				],
				[
					null,
					{ state: 'commissioned', sort: 'serial', dir: 'desc', page: 3 },
					(r) => r.state === 'commissioned'
				],
				[
					null,
					{ q: 'PL48', sort: 'builtAt', dir: 'desc', page: 4 },
					(r) => r.serial.startsWith('PL48')
				],
				[null, { q: '1', sort: 'shippedAt', dir: 'desc' }, (r) => r.serial.includes('1')],
				[
					null,
					{ builtFrom: '2025-03-01', state: 'shipped', sort: 'builtAt', dir: 'asc' },
					(r) => r.state === 'shipped' && r.builtAt! >= Date.UTC(2025, 2, 1)
				],
				[null, { sort: 'state', dir: 'desc', page: 37 }, () => true],
				[null, { sort: 'model', dir: 'asc', page: 54, pageSize: 100 }, () => true],
				[null, { sort: 'dealer', dir: 'desc', page: 80 }, () => true],
				[
					null,
					{ sort: 'dealer', dir: 'asc', page: 40, state: 'commissioned' },
					(r) => r.state === 'commissioned'
				],
				[
					bigDealer,
					{ sort: 'state', dir: 'asc', page: 12 },
					(r) => r.dealer === bigDealer.organisationId
				],
				[bigDealer, {}, (r) => r.dealer === bigDealer.organisationId],
				[
					bigDealer,
					{ sort: 'serial', dir: 'asc', page: 2 },
					(r) => r.dealer === bigDealer.organisationId
				],
				// Combined filters, each plan: state + model by serial, state by dealer, text inside a
				// serial (trigram index for 3+ characters), the scope with a state by model or tested.
				[
					null,
					{ state: 'shipped', model: 'TC-HC-48', sort: 'serial', dir: 'asc', page: 2 },
					(r) => r.state === 'shipped' && codeOf.get(r.modelId) === 'TC-HC-48'
				],
				[
					null,
					{ state: 'shipped', sort: 'dealer', dir: 'asc', page: 3 },
					(r) => r.state === 'shipped'
				],
				[null, { q: '00012', sort: 'builtAt', dir: 'desc' }, (r) => r.serial.includes('00012')],
				[null, { q: '5-0001', sort: 'state', dir: 'asc' }, (r) => r.serial.includes('5-0001')],
				[
					bigDealer,
					{ state: 'commissioned', sort: 'model', dir: 'desc', page: 2 },
					(r) => r.dealer === bigDealer.organisationId && r.state === 'commissioned'
				],
				[
					bigDealer,
					{ state: 'shipped', model: 'TC-HC-24', sort: 'serial', dir: 'desc' },
					(r) =>
						r.dealer === bigDealer.organisationId &&
						r.state === 'shipped' &&
						codeOf.get(r.modelId) === 'TC-HC-24'
				],
				[
					bigDealer,
					{ q: '000', sort: 'shippedAt', dir: 'asc', page: 2 },
					(r) => r.dealer === bigDealer.organisationId && r.serial.includes('000')
				],
				[
					null,
					{ model: 'TC-HC-24', builtFrom: '2025-04-01', sort: 'state', dir: 'desc', page: 4 },
					(r) => codeOf.get(r.modelId) === 'TC-HC-24' && r.builtAt! >= Date.UTC(2025, 3, 1)
				],
				[
					null,
					{ state: 'in_stock', sort: 'shippedAt', dir: 'desc', page: 2 },
					(r) => r.state === 'in_stock'
				],
				[null, { sort: 'builtAt', dir: 'asc', page: 150 }, () => true]
			];
		const sortKey: Record<string, (r: (typeof rows)[number]) => string | number | null> = {
			serial: (r) => r.serial,
			builtAt: (r) => r.builtAt,
			shippedAt: (r) => r.shippedAt,
			state: (r) => FLEET_STATES.indexOf(r.state as (typeof FLEET_STATES)[number]),
			model: (r) => codeOf.get(r.modelId)!,
			dealer: (r) => (r.dealer === null ? null : nameOf.get(r.dealer)!)
		};
		for (const [actor, raw, match] of cases) {
			const query = fleetQuerySchema.parse(raw);
			const sign = query.dir === 'asc' ? 1 : -1;
			const expected = rows
				.filter(match)
				.sort((a, b) => {
					const [x, y] = [sortKey[query.sort](a), sortKey[query.sort](b)];
					if (x !== y) return x === null ? 1 : y === null ? -1 : (x < y ? -1 : 1) * sign;
					return (a.id - b.id) * sign;
				})
				.map((r) => r.serial);
			// Every plan gives the same page: the default, always walking an index in order (few 0),
			// always reading the matches through their filters and sorting them (few unbounded).
			for (const few of [undefined, 0, Infinity]) {
				const got = await listModules(big, actor ?? staff, query, { few });
				const from = (query.page - 1) * query.pageSize;
				const what = `${JSON.stringify(raw)} few ${few}`;
				expect(got.total, what).toBe(expected.length);
				expect(serials(got), what).toEqual(expected.slice(from, from + query.pageSize));
			}
		}
	});
});
