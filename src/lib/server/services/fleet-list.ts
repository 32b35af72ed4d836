import { dataVersion, dataVersionSql, readerOf, type Db } from '$lib/server/db';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { FLEET_STATES, type FleetQuery } from '$lib/schemas/fleet';
import { conditions, keptMatches, viewKey, whereOf, type Condition } from './fleet-filters';
import { keepPage, keptPage, viewCacheAt, type ViewCache } from './fleet-cache';
import { isoInstantsInJson } from '$lib/domain/iso-instant';
import { groupedPage, idsOf, isGrouped, orderedIds, scalar } from './fleet-groups';

/**
 * Up to this many matches are read through their filters' own index and sorted (a few ms);
 * more, and the page is read walking the sort's index in order, which stops after the page.
 */
const FEW = 5000;

/**
 * Answered pages are kept until the data changes (fleet-cache.ts): the same view asked again,
 * by anyone with the same scope, is one read of the data version. FLEET_PAGE_CACHE=0 turns it
 * off: `npm run bench:fleet` runs so by default, to measure the queries themselves
 * (`--page-cache` measures with pages kept).
 */
const KEEP_PAGES = process.env.FLEET_PAGE_CACHE !== '0';

type Indexed = 'serial' | 'builtAt' | 'testedAt' | 'shippedAt';
/** The sort's column and its index; the date indexes carry the state, so a state filter is tested in the index. */
const SORTED: Record<Indexed, { col: string; index: string; dated: boolean }> = {
	serial: { col: 'modules.serial', index: 'modules_serial_unique', dated: false },
	builtAt: { col: 'modules.built_at', index: 'modules_built_state_idx', dated: true },
	testedAt: { col: 'modules.tested_at', index: 'modules_tested_state_idx', dated: true },
	shippedAt: { col: 'modules.shipped_at', index: 'modules_shipped_state_idx', dated: true }
};
type Args = (string | number)[];

/**
 * The rows of a page as one JSON array, in the order of `ids` (a JSON array of module ids or
 * a query giving them): one result row, however many modules (libSQL spends ~1 µs a value
 * turning result rows into objects; JSON text passes through as one string). The scope is
 * tested here again. Instants come as epoch milliseconds and are written as JSON writes a
 * Date by `isoInstantsInJson` (SQLite's strftime took ~1.4 µs an instant, 0.2 ms a page).
 */
function itemsSql(db: Db, scope: Condition[]) {
	const where = whereOf(scope);
	return {
		sql: `SELECT ${dataVersionSql(db)}, json_group_array(json_object(
				'serial', modules.serial, 'state', modules.state, 'model', module_models.code,
				'dealer', organisations.name, 'builtAt', modules.built_at,
				'testedAt', modules.tested_at, 'testOutcome', modules.test_outcome,
				'shippedAt', modules.shipped_at,
				'cellLots', json(coalesce(modules.cell_lots, '[]')), 'site', sites.name
			) ORDER BY page.key)
			FROM json_each(?) AS page
			JOIN modules ON modules.id = page.value
			JOIN module_models ON module_models.id = modules.model_id
			LEFT JOIN organisations ON organisations.id = modules.dealer_org_id
			LEFT JOIN systems ON systems.id = modules.system_id
			LEFT JOIN sites ON sites.id = systems.site_id
			${where.sql}`,
		args: where.args
	};
}

/** ORDER BY a sort column; `+` keeps SQLite from walking its index (for a few matches, read through their filter). */
function columnOrder(sort: Indexed, dir: 'asc' | 'desc', walk: boolean) {
	const { col, dated } = SORTED[sort];
	return `${walk ? '' : '+'}${col} ${dir}${dated && dir === 'asc' ? ' NULLS LAST' : ''}, modules.id ${dir}`;
}

/**
 * One page of the register as the actor may see it, as the JSON text `GET /api/modules`
 * answers: `{ items, total, page, pageSize }`. A dealer's staff see only their own
 * organisation's modules, whatever filter is sent: the scope is a condition of every query.
 *
 * The whole answer is kept until the data changes (`keptPage`; `keep: false` reads afresh),
 * and so is the count of the view (`viewCacheAt`). A page not kept is read, by sort:
 * - serial or a date, with up to FEW matches: the matches through their filters' indexes,
 *   sorted (e.g. a cell lot: its 1,500 modules by rowid, ~2 ms), the ordered list kept per
 *   data version like the count (`orderedIds`), each page its slice;
 * - serial or a date, more matches: walking the sort's index in order, the filters tested
 *   on each entry, stopping after the page (the date indexes hold the state, so a state
 *   filter reads no row; state + model by serial walks (state, model_id, serial));
 * - state, model or dealer: the count per value is kept too; the page is read from the one
 *   or two values it falls in, each along that value's index in id order (fleet-groups.ts).
 * Then one statement joins the page's names and returns it as one JSON value.
 */
export async function listModulesJson(
	db: Db,
	actor: Actor,
	query: FleetQuery,
	{ few = FEW, keep = KEEP_PAGES }: { few?: number; keep?: boolean } = {}
): Promise<string> {
	const { page, pageSize } = query;
	const conds = conditions(query, dealerScopeOf(actor));
	if (!conds) return `{"items":[],"total":0,"page":${page},"pageSize":${pageSize}}`;
	// The version first: everything read after it is of it or newer (see fleet-cache.ts).
	const version = await dataVersion(db);
	const key = `${viewKey('page', conds)}|${conds.some((c) => c.scope) ? 'scoped' : 'all'}|${query.sort}|${query.dir}|${page}|${pageSize}|${few}`;
	const hit = keep ? keptPage(db, key, version) : undefined;
	if (hit !== undefined) return hit;
	const cache = viewCacheAt(db, version);
	const resolved = await keptMatches(readerOf(db), cache, conds);
	const { json } = await pageOf(db, resolved, query, cache, few);
	if (keep) keepPage(db, key, version, json);
	return json;
}

/** The answer of `listModulesJson` with the data version the page was read at (null: none read). */
async function pageOf(
	db: Db,
	conds: Condition[],
	query: FleetQuery,
	cache: ViewCache,
	few: number
): Promise<{ json: string; version: unknown }> {
	const { page, pageSize, sort, dir } = query;
	const answer = (items: string, total: number, version: unknown = null) => ({
		json: `{"items":${items},"total":${total},"page":${page},"pageSize":${pageSize}}`,
		version
	});
	const client = readerOf(db);
	const offset = (page - 1) * pageSize;
	const items = itemsSql(
		db,
		conds.filter((c) => c.scope)
	);
	const withItems = async (sql: string, args: Args, total: number) => {
		const row = (await client.execute({ sql, args })).rows[0];
		return answer(isoInstantsInJson(String(row[1])), total, row[0]);
	};

	if (isGrouped(sort)) {
		const { total, ids } = await groupedPage(client, cache, conds, sort, query, few);
		if (ids.length === 0) return answer('[]', total);
		return withItems(items.sql, [JSON.stringify(ids), ...items.args], total);
	}

	const where = whereOf(conds);
	const total = await cache(viewKey('count', conds), () =>
		scalar<number>(client, `SELECT count(*) FROM modules ${where.sql}`, where.args)
	);
	if (total === 0 || offset >= total) return answer('[]', total);
	if (total <= few) {
		// A few matches (a cell lot, an import, a text inside serials): read through their filters'
		// indexes, sorted, and kept as a list; the page is its slice.
		const all = await orderedIds(
			client,
			cache,
			viewKey(`ids|${sort}|${dir}`, conds),
			`SELECT modules.id AS id FROM modules ${where.sql} ORDER BY ${columnOrder(sort, dir, false)}`,
			where.args
		);
		const ids = all.slice(offset, offset + pageSize);
		if (ids.length === 0) return answer('[]', total);
		return withItems(items.sql, [JSON.stringify(ids), ...items.args], total);
	}
	const index =
		sort === 'serial' && conds.some((c) => c.on === 'state') && conds.some((c) => c.on === 'model')
			? 'modules_state_model_serial_idx'
			: SORTED[sort].index;
	const select = `SELECT modules.id AS id FROM modules INDEXED BY ${index} ${where.sql}
		ORDER BY ${columnOrder(sort, dir, true)} LIMIT ? OFFSET ?`;
	// One statement: the page's ids (as JSON) feed the join of their names.
	const sql = items.sql.replace('json_each(?)', `json_each((${idsOf(select)}))`);
	return withItems(sql, [...where.args, pageSize, offset, ...items.args], total);
}

export type FleetItem = {
	serial: string;
	state: (typeof FLEET_STATES)[number];
	model: string;
	dealer: string | null;
	builtAt: Date | null;
	testedAt: Date | null;
	testOutcome: string | null;
	shippedAt: Date | null;
	cellLots: string[];
	site: string | null;
};

/** `listModulesJson` read back, with instants as Dates: for callers in the server (`few`, `keep`: tests choose the plan). */
export async function listModules(
	db: Db,
	actor: Actor,
	query: FleetQuery,
	plan: { few?: number; keep?: boolean } = {}
) {
	const r = JSON.parse(await listModulesJson(db, actor, query, plan)) as {
		items: (Omit<FleetItem, 'builtAt' | 'testedAt' | 'shippedAt'> &
			Record<'builtAt' | 'testedAt' | 'shippedAt', string | null>)[];
		total: number;
		page: number;
		pageSize: number;
	};
	const date = (s: string | null) => (s === null ? null : new Date(s));
	return {
		...r,
		items: r.items.map((i): FleetItem => ({
			...i,
			builtAt: date(i.builtAt),
			testedAt: date(i.testedAt),
			shippedAt: date(i.shippedAt)
		}))
	};
}
