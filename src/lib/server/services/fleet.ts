import { and, asc, count, desc, eq, inArray, sql, type SQL } from 'drizzle-orm';
import type { AnySQLiteColumn } from 'drizzle-orm/sqlite-core';
import Papa from 'papaparse';
import type { Db } from '$lib/server/db';
import { moduleCellLots, moduleModels, modules, organisations, factoryTests, sites, systems, userPrefs } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { InvalidInputError } from '$lib/server/errors';
import { neutraliseCell } from '$lib/domain/factory-csv';
import { STATE_LABELS } from '$lib/module-states';
import { FLEET_COLUMN_IDS, FLEET_STATES, type FleetColumn, type FleetQuery, type FleetSort } from '$lib/schemas/fleet';

/** Most rows one CSV export carries: the whole register at its design size. */
export const EXPORT_CAP = 200_000;
const PREFS_KEY = 'fleet.columns';
const DAY_MS = 86_400_000;

/**
 * One WHERE condition in up to three forms: `plain` lets SQLite use the column's index
 * (the count, the export); `hinted` switches that index off with a unary `+` (SQLite's
 * documented way to steer the planner) so a walk down the sort's index is kept; `gather`,
 * when set, is a form that collects matches faster than `plain` when it is the only
 * condition. `on` names the sort whose column the condition tests, if any; `bunched`
 * marks matches that sit together in time (a cell lot, an import, a serial's year),
 * where walking an index of dates in order finds nothing for long stretches.
 */
type Condition = { on: FleetSort | null; plain: SQL; hinted: SQL; gather?: SQL; bunched?: boolean };

function condition(on: FleetSort | null, make: (col: (c: AnySQLiteColumn) => SQL) => SQL): Condition {
	return { on, plain: make((c) => sql`${c}`), hinted: make((c) => sql`+${c}`) };
}

/** Serials are PL…; text starting so is read as the start of a serial, anything else as text inside one. */
export function serialSearch(text: string): { kind: 'prefix'; from: string; to: string } | { kind: 'contains'; text: string } | null {
	const q = text.replace(/\s+/g, '').toUpperCase();
	if (q === '') return null;
	if (/^PL[A-Z0-9-]*$/.test(q)) return { kind: 'prefix', from: q, to: q.slice(0, -1) + String.fromCharCode(q.charCodeAt(q.length - 1) + 1) };
	return { kind: 'contains', text: q };
}

/** Days are UTC days: `builtTo` 2026-03-31 includes everything built before 2026-04-01T00:00Z. */
const dayStart = (d: string) => Date.parse(`${d}T00:00:00Z`);

/** The filters of a view as conditions; the dealer scope is always the first and no filter lifts it. */
function conditions(query: FleetQuery, scope: number | null): Condition[] {
	const out: Condition[] = [];
	if (scope !== null) out.push(condition(null, (c) => sql`${c(modules.dealerOrgId)} = ${scope}`));
	if (query.dealer !== undefined) out.push(condition(null, (c) => sql`${c(modules.dealerOrgId)} = ${query.dealer}`));
	if (query.state) out.push(condition(null, (c) => sql`${c(modules.state)} = ${query.state}`));
	if (query.model) {
		const id = sql`(SELECT ${moduleModels.id} FROM ${moduleModels} WHERE ${moduleModels.code} = ${query.model})`;
		out.push(condition(null, (c) => sql`${c(modules.modelId)} = ${id}`));
	}
	if (query.builtFrom) out.push(condition('builtAt', (c) => sql`${c(modules.builtAt)} >= ${dayStart(query.builtFrom!)}`));
	if (query.builtTo) out.push(condition('builtAt', (c) => sql`${c(modules.builtAt)} < ${dayStart(query.builtTo!) + DAY_MS}`));
	// IN (subquery) starts from the small side's index; a correlated EXISTS visits every module (~180 ms).
	if (query.lot) {
		const ids = sql`(SELECT ${moduleCellLots.moduleId} FROM ${moduleCellLots} WHERE ${moduleCellLots.lotCode} = ${query.lot})`;
		out.push({ ...condition(null, (c) => sql`${c(modules.id)} IN ${ids}`), bunched: true });
	}
	if (query.importId !== undefined) {
		const ids = sql`(SELECT ${factoryTests.moduleId} FROM ${factoryTests} WHERE ${factoryTests.importId} = ${query.importId})`;
		out.push({ ...condition(null, (c) => sql`${c(modules.id)} IN ${ids}`), bunched: true });
	}
	const search = serialSearch(query.q ?? '');
	if (search?.kind === 'prefix') {
		const range = condition('serial', (c) => sql`${c(modules.serial)} >= ${search.from} AND ${c(modules.serial)} < ${search.to}`);
		out.push({ ...range, bunched: /^PL[0-9A-Z]{1,4}-\d/.test(search.from) });
	} else if (search?.kind === 'contains') {
		// No index finds text inside a serial. instr over the serial index alone (no table rows)
		// counts 200,000 serials in ~12 ms; `gather` collects the matching ids the same way.
		const test = sql`instr(${modules.serial}, ${search.text}) > 0`;
		out.push({ on: null, plain: test, hinted: test, gather: sql`${modules.id} IN (SELECT s.id FROM modules s WHERE instr(s.serial, ${search.text}) > 0)` });
	}
	return out;
}

/** Sorts backed by an index of their own. */
const SORT_COLUMNS: Partial<Record<FleetSort, AnySQLiteColumn>> = { serial: modules.serial, builtAt: modules.builtAt, testedAt: modules.testedAt, shippedAt: modules.shippedAt };

/**
 * Sorts by a short list: the column and each value's place. States go in the order of a
 * module's life, models by code, dealers by name; "no dealer" comes last both ways.
 */
async function ranking(db: Db, sort: FleetSort): Promise<{ col: AnySQLiteColumn; keys: (string | number)[] } | null> {
	if (sort === 'state') return { col: modules.state, keys: FLEET_STATES };
	if (sort === 'model') return { col: modules.modelId, keys: (await db.select({ id: moduleModels.id }).from(moduleModels).orderBy(asc(moduleModels.code))).map((m) => m.id) };
	if (sort === 'dealer') return { col: modules.dealerOrgId, keys: (await db.select({ id: organisations.id }).from(organisations).orderBy(asc(organisations.name), asc(organisations.id))).map((o) => o.id) };
	return null;
}

/**
 * ORDER BY for a sort, always ending in the id so equal values page stably. Dates put
 * "not yet" last both ways (SQLite still walks the index for ASC NULLS LAST). `hint` puts
 * a unary `+` on the sort column, so SQLite sorts the matches instead of walking its index.
 */
async function sortOrder(db: Db, sort: FleetSort, dir: 'asc' | 'desc'): Promise<(hint: boolean) => SQL[]> {
	const d = dir === 'asc' ? sql`ASC` : sql`DESC`;
	const id = sql`${modules.id} ${d}`;
	const ranked = await ranking(db, sort);
	if (ranked) {
		const missing = dir === 'asc' ? ranked.keys.length : -1;
		const place = sql`CASE ${ranked.col} ${sql.join(ranked.keys.map((k, i) => sql`WHEN ${k} THEN ${i}`), sql` `)} ELSE ${missing} END`;
		return () => [sql`${place} ${d}`, id];
	}
	const col = SORT_COLUMNS[sort]!;
	const nulls = sort !== 'serial' && dir === 'asc' ? sql` NULLS LAST` : sql``;
	return (hint) => [hint ? sql`+${col} ${d}${nulls}` : sql`${col} ${d}${nulls}`, id];
}

/**
 * A page sorted by a short list, without sorting the matches: count them per value
 * (GROUP BY on the value's index), put the groups in order, and read the page from the
 * one or two groups it falls in, each in id order along the value's index.
 */
async function groupedPage(db: Db, where: SQL | undefined, ranked: { col: AnySQLiteColumn; keys: (string | number)[] }, query: FleetQuery) {
	const { page, pageSize, dir } = query;
	const groups = await db.select({ key: sql<string | number | null>`${ranked.col}`, n: count() }).from(modules).where(where).groupBy(ranked.col);
	const place = (k: string | number | null) => (k === null ? Infinity : ranked.keys.indexOf(k));
	groups.sort((a, b) => (place(a.key) === Infinity ? 1 : place(b.key) === Infinity ? -1 : (place(a.key) - place(b.key)) * (dir === 'asc' ? 1 : -1)));
	const ids: number[] = [];
	let skip = (page - 1) * pageSize;
	for (const g of groups) {
		if (ids.length === pageSize) break;
		if (skip >= g.n) {
			skip -= g.n;
			continue;
		}
		const inGroup = g.key === null ? sql`${ranked.col} IS NULL` : sql`${ranked.col} = ${g.key}`;
		const rows = await db.select({ id: modules.id }).from(modules).where(and(where, inGroup)).orderBy(dir === 'asc' ? asc(modules.id) : desc(modules.id)).limit(pageSize - ids.length).offset(skip);
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
 * A count, then the page's ids chosen on `modules` alone, then names joined for those ids.
 * Sorted by state, model or dealer, see `groupedPage`. Sorted by a column with an index
 * while filters are set, the count decides how to find the page:
 * if matches are common, walk the sort's index and test each row, bounded to the first
 * `budget` index entries (eight times the rows an even spread needs); if that walk comes
 * back short (matches bunched late, e.g. unbuilt modules under "built"), or matches are
 * rare, gather them through the filters' indexes and sort them. Left to itself SQLite
 * (without ANALYZE statistics) always gathers, ~40 ms per 50,000 matches.
 */
export async function listModules(db: Db, actor: Actor, query: FleetQuery) {
	const conds = conditions(query, dealerScopeOf(actor));
	const { page, pageSize, sort, dir } = query;
	const ranked = await ranking(db, sort);
	const { total, ids } = ranked ? await groupedPage(db, and(...conds.map((c) => c.plain)), ranked, query) : await indexedPage(db, conds, query);
	const rows = ids.length ? await selectItems(db).where(inArray(modules.id, ids)) : [];
	const byId = new Map(rows.map((r) => [r.id, r]));
	return { items: ids.map((id) => toItem(byId.get(id)!)), total, page, pageSize };
}

/** A page sorted by a column with an index (serial or a date): see `listModules`. */
async function indexedPage(db: Db, conds: Condition[], query: FleetQuery) {
	const { page, pageSize, sort, dir } = query;
	const [{ total, size }] = await db
		.select({ total: count(), size: sql<number | null>`(SELECT max(m2.id) FROM modules m2)` })
		.from(modules)
		.where(and(...conds.map((c) => c.plain)));
	const offset = (page - 1) * pageSize;
	if (total === 0 || offset >= total) return { total, ids: [] };

	const order = await sortOrder(db, sort, dir);
	const pageIds = async (where: SQL | undefined, hint: boolean) =>
		(await db.select({ id: modules.id }).from(modules).where(where).orderBy(...order(hint)).limit(pageSize).offset(offset)).map((r) => r.id);
	const gathered = and(...conds.map((c) => (conds.length === 1 && c.gather) || c.plain));
	const sortCol = SORT_COLUMNS[sort]!;
	const own = conds.filter((c) => c.on === sort);
	const others = conds.filter((c) => c.on !== sort);
	if (others.length === 0) return { total, ids: await pageIds(gathered, false) };

	const n = Math.max(size ?? total, total);
	const budget = Math.max(1000, Math.ceil((8 * (offset + pageSize) * n) / total));
	if (budget * 4 <= n && !others.some((c) => c.bunched)) {
		const [edge] = await db.select({ v: sql<number | string | null>`${sortCol}` }).from(modules).where(and(...own.map((c) => c.plain))).orderBy(...order(false)).limit(1).offset(budget);
		if (edge && edge.v !== null) {
			const bound = dir === 'desc' ? sql`${sortCol} >= ${edge.v}` : sql`${sortCol} <= ${edge.v}`;
			const walked = await pageIds(and(...own.map((c) => c.plain), ...others.map((c) => c.hinted), bound), false);
			if (walked.length === Math.min(pageSize, total - offset)) return { total, ids: walked };
		}
	}
	return { total, ids: await pageIds(gathered, true) };
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
	const x = selectItems(db)
		.where(and(...conds.map((c) => (conds.length === 1 && c.gather) || c.plain)))
		.orderBy(...order(false))
		.limit(EXPORT_CAP)
		.as('x');
	const [{ json }] = await db
		.select({ json: sql<string>`json_group_array(json_array(${x.serial}, ${x.model}, ${x.state}, ${x.dealer}, ${x.builtAt}, ${x.testedAt}, ${x.testOutcome}, ${x.shippedAt}, ${x.cellLots}, ${x.site}))` })
		.from(x);
	type Row = [string, string, string, string | null, number | null, number | null, string | null, number | null, string | null, string | null];
	const fields = ['serial', 'model', 'state', 'state_label', 'dealer', 'built_at', 'tested_at', 'test_outcome', 'shipped_at', 'cell_lots', 'site'];
	const data = (JSON.parse(json) as Row[]).map(([serial, model, state, dealer, built, tested, outcome, shipped, lots, site]) =>
		[serial, model, state, STATE_LABELS[state] ?? state, dealer ?? '', iso(built), iso(tested), outcome ?? '', iso(shipped), lots ? (JSON.parse(lots) as string[]).join(' ') : '', site ?? ''].map(
			neutraliseCell
		)
	);
	const csv = Papa.unparse({ fields, data }, { newline: '\r\n' });
	// Papa Parse ends the text with a line break only when there are no data rows.
	return '\uFEFF' + csv.replace(/\r\n$/, '') + '\r\n';
}

/** The filter choices for the fleet page: models, and dealers for the assembler's staff only. */
export async function fleetFilterOptions(db: Db, actor: Actor) {
	const models = await db.select({ code: moduleModels.code, name: moduleModels.name }).from(moduleModels).orderBy(asc(moduleModels.code));
	const dealers =
		dealerScopeOf(actor) === null
			? await db.select({ id: organisations.id, name: organisations.name }).from(organisations).where(eq(organisations.kind, 'dealer')).orderBy(asc(organisations.name))
			: null;
	return { models, dealers };
}

const known = (ids: unknown): FleetColumn[] =>
	Array.isArray(ids) ? FLEET_COLUMN_IDS.filter((c) => ids.includes(c)) : [];

/** The columns a person chose to see in the fleet table, or null when they never chose. */
export async function getColumnPrefs(db: Db, userId: number): Promise<FleetColumn[] | null> {
	const [row] = await db.select({ value: userPrefs.value }).from(userPrefs).where(and(eq(userPrefs.userId, userId), eq(userPrefs.key, PREFS_KEY)));
	return row ? known(JSON.parse(row.value)) : null;
}

/**
 * Keeps a person's visible columns (serial is always shown). A display preference,
 * not register data, so it is not written to the audit trail.
 */
export async function setColumnPrefs(db: Db, userId: number, columns: string[]): Promise<FleetColumn[]> {
	const unknown = columns.filter((c) => !(FLEET_COLUMN_IDS as string[]).includes(c));
	if (unknown.length) {
		throw new InvalidInputError(`Unknown column ${unknown.join(', ')}.`, unknown.map((c) => ({ path: 'columns', message: `“${c}” is not a column; choose from ${FLEET_COLUMN_IDS.join(', ')}.` })));
	}
	const chosen = known(['serial', ...columns]);
	const value = JSON.stringify(chosen);
	await db
		.insert(userPrefs)
		.values({ userId, key: PREFS_KEY, value })
		.onConflictDoUpdate({ target: [userPrefs.userId, userPrefs.key], set: { value } });
	return chosen;
}
