import { and, asc, count, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import { alias, SQLiteSyncDialect, type AnySQLiteColumn } from 'drizzle-orm/sqlite-core';
import Papa from 'papaparse';
import { dataVersion, type Db } from '$lib/server/db';
import {
	moduleCellLots,
	moduleModels,
	modules,
	organisations,
	factoryTests,
	sites,
	systems,
	userPrefs
} from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { InvalidInputError } from '$lib/server/errors';
import { neutraliseCell } from '$lib/domain/factory-csv';
import { STATE_LABELS } from '$lib/module-states';
import {
	FLEET_COLUMN_IDS,
	FLEET_STATES,
	type FleetColumn,
	type FleetQuery,
	type FleetSort
} from '$lib/schemas/fleet';

/** Most rows one CSV export carries: the whole register at its design size. */
export const EXPORT_CAP = 200_000;
const PREFS_KEY = 'fleet.columns';
const DAY_MS = 86_400_000;
/** Up to this many matches are read with their sort value and sorted in JavaScript (~1-5 µs a row). */
const FEW = 5000;

/**
 * One filter. `test(t, hint)` writes it against a copy of `modules`; `hint` puts a unary
 * `+` on the column (SQLite's documented way to keep a term from choosing the index).
 * `on`: the sort whose column it tests; `col`: the column; `rank`: the order in which to
 * prefer it as the index a count starts from (small ranges first, the dealer scope last);
 * `list`: ids from another table (cell lot, import), small and read through that table's
 * index; `bunched`: matches sit together in time, so walking a date index finds them late.
 */
type Columns = Record<
	'id' | 'serial' | 'state' | 'modelId' | 'dealerOrgId' | 'builtAt',
	AnySQLiteColumn
>;
type Condition = {
	on: FleetSort | null;
	col: AnySQLiteColumn;
	rank: number;
	test: (t: Columns, hint: boolean) => SQL;
	list?: boolean;
	bunched?: boolean;
	scope?: boolean;
};

const x = alias(modules, 'x');
const col = (c: AnySQLiteColumn, hint: boolean) => (hint ? sql`+${c}` : sql`${c}`);
const plain = (c: Condition) => c.test(modules, false);
const hinted = (c: Condition) => c.test(modules, true);
/**
 * The condition as a set of ids read from its own covering index (`+id IN (SELECT x.id …)`):
 * testing a row against it reads no table row, which is what makes filters cheap to combine.
 */
const asSet = (c: Condition) =>
	c.list
		? hinted(c)
		: sql`+${modules.id} IN (SELECT ${x.id} FROM ${modules} AS ${x} WHERE ${c.test(x, false)})`;

/** Serials are PL…; text starting so is read as the start of a serial, anything else as text inside one. */
function serialSearch(
	text: string
): { kind: 'prefix'; from: string; to: string } | { kind: 'contains'; text: string } | null {
	const q = text.replace(/\s+/g, '').toUpperCase();
	if (q === '') return null;
	if (/^PL[A-Z0-9-]*$/.test(q))
		return {
			kind: 'prefix',
			from: q,
			to: q.slice(0, -1) + String.fromCharCode(q.charCodeAt(q.length - 1) + 1)
		};
	return { kind: 'contains', text: q };
}

/** Days are UTC days: `builtTo` 2026-03-31 includes everything built before 2026-04-01T00:00Z. */
const dayStart = (d: string) => Date.parse(`${d}T00:00:00Z`);

/**
 * The filters of a view. The dealer scope is always one of them and no filter lifts it:
 * a `dealer` filter naming another organisation answers null (nothing to show).
 */
function conditions(query: FleetQuery, scope: number | null): Condition[] | null {
	const out: Condition[] = [];
	if (scope !== null)
		out.push({
			on: null,
			col: modules.dealerOrgId,
			rank: 5,
			scope: true,
			test: (t, h) => sql`${col(t.dealerOrgId, h)} = ${scope}`
		});
	if (query.dealer !== undefined && scope !== null && query.dealer !== scope) return null;
	if (query.dealer !== undefined && scope === null)
		out.push({
			on: null,
			col: modules.dealerOrgId,
			rank: 4,
			test: (t, h) => sql`${col(t.dealerOrgId, h)} = ${query.dealer}`
		});
	if (query.state)
		out.push({
			on: null,
			col: modules.state,
			rank: 2,
			test: (t, h) => sql`${col(t.state, h)} = ${query.state}`
		});
	if (query.model) {
		const id = sql`(SELECT ${moduleModels.id} FROM ${moduleModels} WHERE ${moduleModels.code} = ${query.model})`;
		out.push({
			on: null,
			col: modules.modelId,
			rank: 3,
			test: (t, h) => sql`${col(t.modelId, h)} = ${id}`
		});
	}
	const from = query.builtFrom ? dayStart(query.builtFrom) : null;
	const to = query.builtTo ? dayStart(query.builtTo) + DAY_MS : null;
	if (from !== null || to !== null) {
		const range = (t: Columns, h: boolean) =>
			and(
				from === null ? undefined : sql`${col(t.builtAt, h)} >= ${from}`,
				to === null ? undefined : sql`${col(t.builtAt, h)} < ${to}`
			)!;
		out.push({ on: 'builtAt', col: modules.builtAt, rank: 1, test: range });
	}
	// IN (subquery) starts from the lot's or import's index; a correlated EXISTS visits every module (~180 ms).
	if (query.lot) {
		const ids = sql`(SELECT ${moduleCellLots.moduleId} FROM ${moduleCellLots} WHERE ${moduleCellLots.lotCode} = ${query.lot})`;
		out.push({
			on: null,
			col: modules.id,
			rank: 0,
			list: true,
			bunched: true,
			test: (t, h) => sql`${col(t.id, h)} IN ${ids}`
		});
	}
	if (query.importId !== undefined) {
		const ids = sql`(SELECT ${factoryTests.moduleId} FROM ${factoryTests} WHERE ${factoryTests.importId} = ${query.importId})`;
		out.push({
			on: null,
			col: modules.id,
			rank: 0,
			list: true,
			bunched: true,
			test: (t, h) => sql`${col(t.id, h)} IN ${ids}`
		});
	}
	const search = serialSearch(query.q ?? '');
	if (search?.kind === 'prefix') {
		// A range on the unique serial index. Past the variant, a prefix names a build year.
		const test = (t: Columns, h: boolean) =>
			sql`${col(t.serial, h)} >= ${search.from} AND ${col(t.serial, h)} < ${search.to}`;
		out.push({
			on: 'serial',
			col: modules.serial,
			rank: 1,
			bunched: /^PL[0-9A-Z]{1,4}-\d/.test(search.from),
			test
		});
	} else if (search?.kind === 'contains') {
		// No index finds text inside a serial: instr reads the serial index alone (no table rows), 200,000 serials in ~13 ms.
		out.push({
			on: null,
			col: modules.serial,
			rank: 6,
			test: (t) => sql`instr(${t.serial}, ${search.text}) > 0`
		});
	}
	return out;
}

/**
 * The WHERE for counting (and for gathering a few matches): one condition starts the
 * search on its index, the others are id sets. An id list (lot, import) starts, the
 * others then checked through their index by (value, rowid). The dealer scope with a state
 * filter uses the (dealer, state) index directly.
 */
function counted(conds: Condition[]): SQL | undefined {
	const pairIndex =
		(conds.length === 2 &&
			conds.some((c) => c.scope) &&
			conds.some((c) => c.col === modules.state)) ||
		stateAndModel(conds);
	if (conds.length <= 1 || pairIndex || conds.some((c) => c.list)) return and(...conds.map(plain));
	const [first, ...rest] = [...conds].sort((a, b) => a.rank - b.rank);
	return and(plain(first), ...rest.map(asSet));
}

/** Exactly a state and a model filter: the (state, model_id, serial) index answers both at once. */
const stateAndModel = (conds: Condition[]) =>
	conds.length === 2 &&
	conds.some((c) => c.col === modules.state) &&
	conds.some((c) => c.col === modules.modelId);

/**
 * Counts (and per-value groups) of a view, kept until the data may have changed
 * (`dataVersion`) and at most 30 s: the count is most of the cost of a page sorted by a
 * short list, and it is the same for every page and both directions.
 */
const counts = new Map<string, { version: string; at: number; value: unknown }>();
async function remembered<T>(db: Db, key: string, compute: () => Promise<T>): Promise<T> {
	const version = await dataVersion(db);
	const hit = version ? counts.get(key) : undefined;
	if (hit && hit.version === version && Date.now() - hit.at < 30_000) return hit.value as T;
	const value = await compute();
	if (version) {
		counts.delete(key);
		counts.set(key, { version, at: Date.now(), value });
		while (counts.size > 500) counts.delete(counts.keys().next().value!);
	}
	return value;
}
const viewKey = (kind: string, where: SQL | undefined) => {
	if (!where) return kind;
	const q = new SQLiteSyncDialect().sqlToQuery(where);
	return `${kind}|${q.sql}|${JSON.stringify(q.params)}`;
};

/** Sorts backed by an index of their own. */
const SORT_COLUMNS: Partial<Record<FleetSort, AnySQLiteColumn>> = {
	serial: modules.serial,
	builtAt: modules.builtAt,
	testedAt: modules.testedAt,
	shippedAt: modules.shippedAt
};

/**
 * Sorts by a short list: the column and each value's place. States go in the order of a
 * module's life, models by code, dealers by name; "no dealer" comes last both ways.
 */
async function ranking(
	db: Db,
	sort: FleetSort
): Promise<{ col: AnySQLiteColumn; keys: (string | number)[] } | null> {
	if (sort === 'state') return { col: modules.state, keys: FLEET_STATES };
	if (sort === 'model')
		return {
			col: modules.modelId,
			keys: (
				await db.select({ id: moduleModels.id }).from(moduleModels).orderBy(asc(moduleModels.code))
			).map((m) => m.id)
		};
	if (sort === 'dealer')
		return {
			col: modules.dealerOrgId,
			keys: (
				await db
					.select({ id: organisations.id })
					.from(organisations)
					.orderBy(asc(organisations.name), asc(organisations.id))
			).map((o) => o.id)
		};
	return null;
}

/**
 * ORDER BY for a sort, always ending in the id so equal values page stably. Dates put
 * "not yet" last both ways (SQLite still walks the index for ASC NULLS LAST).
 */
async function sortOrder(db: Db, sort: FleetSort, dir: 'asc' | 'desc'): Promise<SQL[]> {
	const d = dir === 'asc' ? sql`ASC` : sql`DESC`;
	const ranked = await ranking(db, sort);
	if (ranked) {
		const place = sql`CASE ${ranked.col} ${sql.join(
			ranked.keys.map((k, i) => sql`WHEN ${k} THEN ${i}`),
			sql` `
		)} ELSE ${dir === 'asc' ? ranked.keys.length : -1} END`;
		return [sql`${place} ${d}`, sql`${modules.id} ${d}`];
	}
	return [
		sql`${SORT_COLUMNS[sort]} ${d}${sort !== 'serial' && dir === 'asc' ? sql` NULLS LAST` : sql``}`,
		sql`${modules.id} ${d}`
	];
}

/**
 * A page sorted by a short list, without sorting the matches: count them per value
 * (GROUP BY along the value's index), put the groups in order, and read the page from the
 * one or two groups it falls in, each in id order along the same index. Conditions on the
 * grouped column (or the dealer's, with the (dealer, state) index) narrow that walk; the
 * others are id sets.
 */
async function groupedPage(
	db: Db,
	conds: Condition[],
	ranked: { col: AnySQLiteColumn; keys: (string | number)[] },
	query: FleetQuery
) {
	const { page, pageSize, dir } = query;
	const narrows = (c: Condition) =>
		c.col === ranked.col || (ranked.col === modules.state && c.col === modules.dealerOrgId);
	const where = and(...conds.map((c) => (narrows(c) ? plain(c) : asSet(c))));
	const groups = [
		...(await remembered(db, viewKey(`groups:${query.sort}`, where), () =>
			db
				.select({ key: sql<string | number | null>`${ranked.col}`, n: count() })
				.from(modules)
				.where(where)
				.groupBy(ranked.col)
		))
	];
	const place = (k: string | number | null) => (k === null ? Infinity : ranked.keys.indexOf(k));
	groups.sort((a, b) =>
		place(a.key) === Infinity
			? 1
			: place(b.key) === Infinity
				? -1
				: (place(a.key) - place(b.key)) * (dir === 'asc' ? 1 : -1)
	);
	const ids: number[] = [];
	let skip = (page - 1) * pageSize;
	for (const g of groups) {
		if (ids.length === pageSize) break;
		if (skip >= g.n) {
			skip -= g.n;
			continue;
		}
		const inGroup = g.key === null ? sql`${ranked.col} IS NULL` : sql`${ranked.col} = ${g.key}`;
		const rows = await db
			.select({ id: modules.id })
			.from(modules)
			.where(and(where, inGroup))
			.orderBy(dir === 'asc' ? asc(modules.id) : desc(modules.id))
			.limit(pageSize - ids.length)
			.offset(skip);
		ids.push(...rows.map((r) => r.id));
		skip = 0;
	}
	return { total: groups.reduce((sum, g) => sum + g.n, 0), ids };
}

const ITEM = {
	id: modules.id,
	serial: modules.serial,
	state: modules.state,
	model: sql<string>`${moduleModels.code}`.as('model'),
	dealer: sql<string | null>`${organisations.name}`.as('dealer'),
	builtAt: modules.builtAt,
	testedAt: modules.testedAt,
	testOutcome: modules.testOutcome,
	shippedAt: modules.shippedAt,
	cellLots: modules.cellLots,
	site: sql<string | null>`${sites.name}`.as('site')
};

/** Module rows with their model, dealer and site names: joined for the rows returned only. */
function selectItems(db: Db) {
	return db
		.select(ITEM)
		.from(modules)
		.innerJoin(moduleModels, eq(moduleModels.id, modules.modelId))
		.leftJoin(organisations, eq(organisations.id, modules.dealerOrgId))
		.leftJoin(systems, eq(systems.id, modules.systemId))
		.leftJoin(sites, eq(sites.id, systems.siteId));
}

const toItem = ({ id: _id, ...r }: Awaited<ReturnType<typeof selectItems>>[number]) => ({
	...r,
	cellLots: r.cellLots ? (JSON.parse(r.cellLots) as string[]) : []
});
export type FleetItem = ReturnType<typeof toItem>;

/**
 * One page of the register as the actor may see it: filtered, sorted and paged in SQLite.
 * A dealer's staff see only their own organisation's modules, whatever filter is sent.
 *
 * Table rows are read for the page only (~1-5 µs each on a 150 MB file; an index entry
 * costs ~0.05 µs): a count, the page's ids from indexes, then names joined for those ids.
 * Sorted by state, model or dealer, see `groupedPage`. Sorted by serial or a date, the
 * page is read walking that column's index in order, testing each entry:
 * - when matches are common (an even spread reaches the page within 500 entries), by
 *   reading each row, bounded to four times that many entries;
 * - otherwise, or when that bounded walk comes back short (matches bunched late, e.g.
 *   unbuilt modules under "built"), against the filters' id sets: no row is read, and the
 *   cost stays under one pass over the index plus the sets.
 */
export async function listModules(db: Db, actor: Actor, query: FleetQuery) {
	const { page, pageSize, sort } = query;
	const conds = conditions(query, dealerScopeOf(actor));
	if (!conds) return { items: [] as FleetItem[], total: 0, page, pageSize };
	const ranked = await ranking(db, sort);
	const { total, ids } = ranked
		? await groupedPage(db, conds, ranked, query)
		: await indexedPage(db, conds, query);
	const rows = ids.length ? await selectItems(db).where(inArray(modules.id, ids)) : [];
	const byId = new Map(rows.map((r) => [r.id, r]));
	return { items: ids.map((id) => toItem(byId.get(id)!)), total, page, pageSize };
}

/** A page sorted by serial or a date: see `listModules`. */
async function indexedPage(db: Db, conds: Condition[], query: FleetQuery) {
	const { page, pageSize, sort, dir } = query;
	const offset = (page - 1) * pageSize;
	const sortCol = SORT_COLUMNS[sort]!;
	const own = conds.filter((c) => c.on === sort).map(plain);
	const others = conds.filter((c) => c.on !== sort);
	if (others.length > 0) {
		// Typed serial text, a cell lot: often a few matches. Their ids come from indexes alone;
		// if there are few, read their sort values and sort here.
		const [found] = await db
			.select({ ids: sql<string>`json_group_array(id)` })
			.from(
				sql`(SELECT ${modules.id} AS id FROM ${modules} WHERE ${counted(conds)} LIMIT ${FEW + 1})`
			);
		const ids = JSON.parse(found.ids) as number[];
		if (ids.length <= FEW) {
			// One JSON row back instead of thousands: row materialisation is the cost here.
			const [packed] = await db
				.select({ rows: sql<string>`json_group_array(json_array(${modules.id}, ${sortCol}))` })
				.from(modules)
				.where(sql`${modules.id} IN (SELECT value FROM json_each(${JSON.stringify(ids)}))`);
			const few = (JSON.parse(packed.rows) as [number, number | string | null][]).map(
				([id, v]) => ({ id, v })
			);
			const sign = dir === 'asc' ? 1 : -1;
			few.sort((a, b) =>
				a.v === b.v
					? (a.id - b.id) * sign
					: a.v === null
						? 1
						: b.v === null
							? -1
							: (a.v < b.v ? -1 : 1) * sign
			);
			return { total: few.length, ids: few.slice(offset, offset + pageSize).map((r) => r.id) };
		}
	}
	// Counted alone, so a view without filters gets SQLite's fast count of the table's b-tree.
	const where = counted(conds);
	const total = await remembered(db, viewKey('count', where), async () => {
		const [r] = await db.select({ n: count() }).from(modules).where(where);
		return r.n;
	});
	if (total === 0 || offset >= total) return { total, ids: [] };
	const [{ size }] = await db
		.select({ size: sql<number | null>`max(${modules.id})` })
		.from(modules);

	const order = await sortOrder(db, sort, dir);
	const pageIds = async (where: SQL | undefined) =>
		(
			await db
				.select({ id: modules.id })
				.from(modules)
				.where(where)
				.orderBy(...order)
				.limit(pageSize)
				.offset(offset)
		).map((r) => r.id);
	if (others.length === 0) return { total, ids: await pageIds(and(...own)) };
	if (sort === 'serial' && stateAndModel(others))
		return { total, ids: await pageIds(and(...conds.map(plain))) };

	const spread = Math.ceil(((offset + pageSize) * Math.max(size ?? total, total)) / total);
	if (spread <= 250 && !others.some((c) => c.bunched)) {
		const [edge] = await db
			.select({ v: sql<number | string | null>`${sortCol}` })
			.from(modules)
			.where(and(...own))
			.orderBy(...order)
			.limit(1)
			.offset(4 * spread);
		const bound = !edge
			? undefined
			: dir === 'desc'
				? sql`${sortCol} >= ${edge.v}`
				: sql`${sortCol} <= ${edge.v}`;
		if (!edge || edge.v !== null) {
			const walked = await pageIds(and(...own, ...others.map(hinted), bound));
			if (walked.length === Math.min(pageSize, total - offset)) return { total, ids: walked };
		}
	}
	return { total, ids: await pageIds(and(...own, ...others.map(asSet))) };
}

const iso = (ms: number | null) => (ms === null ? '' : new Date(ms).toISOString());

/**
 * Every module of the view (up to EXPORT_CAP) as CSV: same filters, scope and order as the
 * table. Every cell goes through `neutraliseCell`, so a site called "=HYPERLINK(…)" stays
 * text in a spreadsheet; a UTF-8 BOM lets Excel read accented names. SQLite hands the rows
 * over as one JSON array (materialising 200,000 result rows one by one costs ~4 s); the
 * LIMITed subquery runs as a co-routine, so rows reach json_group_array in its order.
 */
export async function exportModules(db: Db, actor: Actor, query: FleetQuery): Promise<string> {
	const conds = conditions(query, dealerScopeOf(actor));
	const order = await sortOrder(db, query.sort, query.dir);
	const v = selectItems(db)
		.where(conds ? counted(conds) : sql`0`)
		.orderBy(...order)
		.limit(EXPORT_CAP)
		.as('v');
	const [{ json }] = await db
		.select({
			json: sql<string>`json_group_array(json_array(${v.serial}, ${v.model}, ${v.state}, ${v.dealer}, ${v.builtAt}, ${v.testedAt}, ${v.testOutcome}, ${v.shippedAt}, ${v.cellLots}, ${v.site}))`
		})
		.from(v);
	type Row = [
		string,
		string,
		string,
		string | null,
		number | null,
		number | null,
		string | null,
		number | null,
		string | null,
		string | null
	];
	const fields = [
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
	];
	const data = (JSON.parse(json) as Row[]).map(
		([serial, model, state, dealer, built, tested, outcome, shipped, lots, site]) =>
			[
				serial,
				model,
				state,
				STATE_LABELS[state] ?? state,
				dealer ?? '',
				iso(built),
				iso(tested),
				outcome ?? '',
				iso(shipped),
				lots ? (JSON.parse(lots) as string[]).join(' ') : '',
				site ?? ''
			].map(neutraliseCell)
	);
	const csv = Papa.unparse({ fields, data }, { newline: '\r\n' });
	// Papa Parse ends the text with a line break only when there are no data rows.
	return '\uFEFF' + csv.replace(/\r\n$/, '') + '\r\n';
}

/** The filter choices for the fleet page: models, and dealers for the assembler's staff only. */
export async function fleetFilterOptions(db: Db, actor: Actor) {
	const models = await db
		.select({ code: moduleModels.code, name: moduleModels.name })
		.from(moduleModels)
		.orderBy(asc(moduleModels.code));
	if (dealerScopeOf(actor) !== null) return { models, dealers: null };
	const dealers = await db
		.select({ id: organisations.id, name: organisations.name })
		.from(organisations)
		.where(eq(organisations.kind, 'dealer'))
		.orderBy(asc(organisations.name));
	return { models, dealers };
}

const known = (ids: unknown): FleetColumn[] =>
	Array.isArray(ids) ? FLEET_COLUMN_IDS.filter((c) => ids.includes(c)) : [];

/** The columns a person chose to see in the fleet table, or null when they never chose. */
export async function getColumnPrefs(db: Db, userId: number): Promise<FleetColumn[] | null> {
	const [row] = await db
		.select({ value: userPrefs.value })
		.from(userPrefs)
		.where(and(eq(userPrefs.userId, userId), eq(userPrefs.key, PREFS_KEY)));
	return row ? known(JSON.parse(row.value)) : null;
}

/**
 * Keeps a person's visible columns (serial is always shown). A display preference,
 * not register data, so it is not written to the audit trail.
 */
export async function setColumnPrefs(
	db: Db,
	userId: number,
	columns: string[]
): Promise<FleetColumn[]> {
	const unknown = columns.filter((c) => !(FLEET_COLUMN_IDS as string[]).includes(c));
	if (unknown.length) {
		throw new InvalidInputError(
			`Unknown column ${unknown.join(', ')}.`,
			unknown.map((c) => ({
				path: 'columns',
				message: `“${c}” is not a column; choose from ${FLEET_COLUMN_IDS.join(', ')}.`
			}))
		);
	}
	const chosen = known(['serial', ...columns]);
	const value = JSON.stringify(chosen);
	await db
		.insert(userPrefs)
		.values({ userId, key: PREFS_KEY, value })
		.onConflictDoUpdate({ target: [userPrefs.userId, userPrefs.key], set: { value } });
	return chosen;
}
