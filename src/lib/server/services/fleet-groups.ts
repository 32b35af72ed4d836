import type { Reader } from '$lib/server/db';
import { FLEET_STATES, type FleetQuery, type FleetSort } from '$lib/schemas/fleet';
import { viewKey, whereOf, type Condition } from './fleet-filters';
import type { ViewCache } from './fleet-cache';

export type Grouped = 'state' | 'model' | 'dealer';
export const isGrouped = (s: FleetSort): s is Grouped =>
	s === 'state' || s === 'model' || s === 'dealer';
const GROUP_COL: Record<Grouped, string> = {
	state: 'modules.state',
	model: 'modules.model_id',
	dealer: 'modules.dealer_org_id'
};

type Args = (string | number)[];
export async function scalar<T>(client: Reader, sql: string, args: Args): Promise<T> {
	return (await client.execute({ sql, args })).rows[0][0] as T;
}

/** The ids of a page as one JSON array (`select` gives them in order). */
export const idsOf = (select: string) => `SELECT json_group_array(id) FROM (${select})`;

/**
 * The ids `select` gives (at most a few thousand: the few matches read through their filters'
 * indexes and sorted), in order, kept per data version under `key` (fleet-cache.ts: a commit
 * by any connection starts a new version, and the list is read again). Each page of the same
 * view, filters and sort then takes its slice instead of reading and sorting every match
 * again (a cell lot's 1,500 modules: ~2 ms, the slice ~0.01 ms); its rows are still read at
 * every request (`itemsSql`).
 */
export async function orderedIds(
	client: Reader,
	cache: ViewCache,
	key: string,
	select: string,
	args: Args
): Promise<number[]> {
	return cache(key, async () => JSON.parse(await scalar<string>(client, idsOf(select), args)));
}

/** Models by code, dealers by name then id: the order of a sort by model or dealer. */
async function ranking(
	client: Reader,
	cache: ViewCache,
	sort: Grouped
): Promise<(string | number)[]> {
	if (sort === 'state') return FLEET_STATES;
	const sql =
		sort === 'model'
			? 'SELECT json_group_array(id) FROM (SELECT id FROM module_models ORDER BY code)'
			: 'SELECT json_group_array(id) FROM (SELECT id FROM organisations ORDER BY name, id)';
	return cache(`rank:${sort}`, async () => JSON.parse(await scalar<string>(client, sql, [])));
}

/** ORDER BY a place in `keys` (NULL, i.e. no dealer, last both ways), then id. */
const rankOrder = (col: string, keys: (string | number)[], dir: 'asc' | 'desc') => ({
	sql: `CASE ${col} ${keys.map((_, i) => `WHEN ? THEN ${i}`).join(' ')} ELSE ${dir === 'asc' ? keys.length : -1} END ${dir}, modules.id ${dir}`,
	args: keys
});

/**
 * The index that lists a group's modules in id order, the filters tested on each entry:
 * (state), (model_id), (dealer_org_id), or (dealer_org_id, state) whenever both a dealer and
 * a state are fixed, by a filter or by the group (it holds the fewest entries to walk: a
 * dealer's installed units of one model are about a third of that dealer's installed units,
 * and 1/26 of one model's modules on the invented fleet).
 */
function groupIndex(sort: Grouped, conds: Condition[]): string {
	const fixed = (on: Grouped) => sort === on || conds.some((c) => c.on === on);
	if (fixed('dealer') && fixed('state')) return 'modules_dealer_state_idx';
	return sort === 'model'
		? 'modules_model_idx'
		: sort === 'state'
			? 'modules_state_idx'
			: 'modules_dealer_idx';
}

/**
 * A page sorted by state, model or dealer (see `listModulesJson`): the count per value is
 * kept, and the page is read from the one or two values it falls in, each along that value's
 * index in id order. Up to `few` matches (all of them, or one value's) are read through their
 * filters' own indexes, sorted, and kept as a list (`orderedIds`).
 */
export async function groupedPage(
	client: Reader,
	cache: ViewCache,
	conds: Condition[],
	sort: Grouped,
	query: FleetQuery,
	few: number
): Promise<{ total: number; ids: number[] }> {
	const { page, pageSize, dir } = query;
	const col = GROUP_COL[sort];
	const keys = await ranking(client, cache, sort);
	const where = whereOf(conds);
	const groups = await cache(viewKey(`groups:${sort}`, conds), async () => {
		const json = await scalar<string>(
			client,
			`SELECT json_group_array(json_array(k, n)) FROM (SELECT ${col} AS k, count(*) AS n FROM modules ${where.sql} GROUP BY ${col})`,
			where.args
		);
		return JSON.parse(json) as [string | number | null, number][];
	});
	const total = groups.reduce((sum, [, n]) => sum + n, 0);
	let skip = (page - 1) * pageSize;
	if (total === 0 || skip >= total) return { total, ids: [] };
	if (total <= few) {
		const order = rankOrder(col, keys, dir);
		const all = await orderedIds(
			client,
			cache,
			viewKey(`ids|${sort}|${dir}`, conds),
			`SELECT modules.id AS id FROM modules ${where.sql} ORDER BY ${order.sql}`,
			[...where.args, ...order.args]
		);
		return { total, ids: all.slice(skip, skip + pageSize) };
	}
	const place = (k: string | number | null) => (k === null ? -1 : keys.indexOf(k));
	const sign = dir === 'asc' ? 1 : -1;
	const ordered = [...groups].sort(([a], [b]) =>
		place(a) === -1 ? 1 : place(b) === -1 ? -1 : (place(a) - place(b)) * sign
	);
	const index = groupIndex(sort, conds);
	const equalityOnly = conds.every(
		(c) => c.on === 'state' || c.on === 'model' || c.on === 'dealer'
	);
	const ids: number[] = [];
	for (const [key, n] of ordered) {
		if (ids.length === pageSize) break;
		if (skip >= n) {
			skip -= n;
			continue;
		}
		const inGroup: Condition =
			key === null
				? { on: 'dealer', sql: `${col} IS NULL`, args: [] }
				: { on: sort === 'model' ? 'model' : sort, sql: `${col} = ?`, args: [key] };
		const w = whereOf(conds, inGroup);
		const want = pageSize - ids.length;
		// Along the value's index, testing the filters on each entry: with state, model and dealer
		// filters only, matches are spread along it. A few matches of a list, a range or a text
		// are read through their own index instead, sorted, and kept.
		if (n > few || equalityOnly) {
			const json = await scalar<string>(
				client,
				idsOf(
					`SELECT modules.id AS id FROM modules INDEXED BY ${index} ${w.sql} ORDER BY modules.id ${dir} LIMIT ? OFFSET ?`
				),
				[...w.args, want, skip]
			);
			ids.push(...(JSON.parse(json) as number[]));
		} else {
			const all = await orderedIds(
				client,
				cache,
				viewKey(`ids|${sort}|${dir}|${JSON.stringify(key)}`, conds),
				`SELECT modules.id AS id FROM modules ${w.sql} ORDER BY +modules.id ${dir}`,
				w.args
			);
			ids.push(...all.slice(skip, skip + want));
		}
		skip = 0;
	}
	return { total, ids };
}
