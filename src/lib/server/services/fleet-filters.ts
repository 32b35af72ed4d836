import type { FleetQuery } from '$lib/schemas/fleet';
import type { Reader } from '$lib/server/db';
import type { ViewCache } from './fleet-cache';

/**
 * The filters of a fleet view as SQL over `modules` (no alias), written by hand: drizzle's
 * query building costs ~4 µs a parameter and most of a fleet request's CPU was spent there.
 * Each condition says which column it tests, so the planner in fleet-list.ts can pick the
 * index that answers it. Values always travel as bound parameters.
 */
export type Condition = {
	sql: string;
	args: (string | number)[];
	/** state, model, dealer (a filter or the dealer scope), builtAt range, serial range, or an id list. */
	on: 'state' | 'model' | 'dealer' | 'builtAt' | 'serial' | 'list';
	scope?: boolean;
	/** Text inside a serial looked up in the trigram index: the LIKE pattern (see `containsCondition`). */
	trigram?: string;
	/** What `viewKey` keys the condition by, when its SQL and arguments are not it (a resolved list). */
	key?: string;
};

/** Days are UTC days: `builtTo` 2026-03-31 includes everything built before 2026-04-01T00:00Z. */
const DAY_MS = 86_400_000;
const dayStart = (d: string) => Date.parse(`${d}T00:00:00Z`);

/** Serials are PL…; text starting so is read as the start of a serial, anything else as text inside one. */
export function serialSearch(
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

/**
 * Text inside a serial. Three or more serial characters are looked up in the trigram index
 * `module_serial_search` (FTS5, sqlite.org/fts5.html §4.3.5: LIKE '%…%' with the trigram
 * tokenizer reads the index, ~2 ms for 200,000 serials; a scan of the serial index with
 * instr takes ~50 ms). Shorter text, or characters no serial has (where LIKE's own % and _
 * would mean something), keep the scan.
 */
function containsCondition(text: string): Condition {
	if (text.length >= 3 && /^[A-Z0-9-]+$/.test(text))
		return {
			on: 'list',
			sql: `modules.id IN (SELECT rowid FROM module_serial_search WHERE serial LIKE ?)`,
			args: [`%${text}%`],
			trigram: `%${text}%`
		};
	return { on: 'list', sql: `instr(modules.serial, ?) > 0`, args: [text] };
}

/**
 * The filters of a view. The dealer scope is always one of them and no filter lifts it:
 * a `dealer` filter naming another organisation answers null (nothing to show).
 */
export function conditions(query: FleetQuery, scope: number | null): Condition[] | null {
	const out: Condition[] = [];
	if (query.dealer !== undefined && scope !== null && query.dealer !== scope) return null;
	const dealer = scope ?? query.dealer;
	if (dealer !== undefined)
		out.push({
			on: 'dealer',
			sql: 'modules.dealer_org_id = ?',
			args: [dealer],
			scope: scope !== null
		});
	if (query.state) out.push({ on: 'state', sql: 'modules.state = ?', args: [query.state] });
	if (query.model)
		out.push({
			on: 'model',
			sql: 'modules.model_id = (SELECT id FROM module_models WHERE code = ?)',
			args: [query.model]
		});
	const from = query.builtFrom ? dayStart(query.builtFrom) : null;
	const to = query.builtTo ? dayStart(query.builtTo) + DAY_MS : null;
	if (from !== null) out.push({ on: 'builtAt', sql: 'modules.built_at >= ?', args: [from] });
	if (to !== null) out.push({ on: 'builtAt', sql: 'modules.built_at < ?', args: [to] });
	// IN (subquery) starts from the lot's or import's index; a correlated EXISTS visits every module.
	if (query.lot)
		out.push({
			on: 'list',
			sql: 'modules.id IN (SELECT module_id FROM module_cell_lots WHERE lot_code = ?)',
			args: [query.lot]
		});
	if (query.importId !== undefined)
		out.push({
			on: 'list',
			sql: 'modules.id IN (SELECT module_id FROM factory_tests WHERE import_id = ?)',
			args: [query.importId]
		});
	const search = serialSearch(query.q ?? '');
	if (search?.kind === 'prefix')
		out.push({
			on: 'serial',
			sql: 'modules.serial >= ? AND modules.serial < ?',
			args: [search.from, search.to]
		});
	else if (search?.kind === 'contains') out.push(containsCondition(search.text));
	return out;
}

/** The WHERE clause and its arguments; `extra` adds conditions of the caller's own. */
export function whereOf(conds: Condition[], ...extra: Condition[]) {
	const all = [...conds, ...extra];
	return {
		sql: all.length ? `WHERE ${all.map((c) => `(${c.sql})`).join(' AND ')}` : '',
		args: all.flatMap((c) => c.args)
	};
}

/** The key a view's counts are kept under: the same filters give the same key, whatever the page or sort. */
export const viewKey = (kind: string, conds: Condition[]) =>
	`${kind}|${conds.map((c) => c.key ?? `${c.sql}${JSON.stringify(c.args)}`).join('&')}`;

/**
 * Text inside a serial: its matches are kept per data version as a JSON list of ids, and the
 * condition reads that list. With FTS5's `detail=none` the trigram index gives the rows that
 * have every trigram of the text, and LIKE then reads each of them again to check the text
 * itself (sqlite.org/fts5.html §4.3.5): ~2 ms for the 689 serials with "0012" among 200,000,
 * the count ~3 ms (EXPLAIN QUERY PLAN: `SCAN module_serial_search VIRTUAL TABLE INDEX 0:L0`).
 * Kept, the count and every page and sort of the same text read the list (a few hundred µs).
 */
export async function keptMatches(
	client: Reader,
	cache: ViewCache,
	conds: Condition[]
): Promise<Condition[]> {
	return Promise.all(
		conds.map(async (c) => {
			if (c.trigram === undefined) return c;
			const pattern = c.trigram;
			const ids = await cache(`matches|${pattern}`, async () => {
				const r = await client.execute({
					sql: 'SELECT json_group_array(rowid) FROM module_serial_search WHERE serial LIKE ?',
					args: [pattern]
				});
				return String(r.rows[0][0]);
			});
			return {
				on: c.on,
				sql: 'modules.id IN (SELECT value FROM json_each(?))',
				args: [ids],
				key: `${c.sql}${JSON.stringify(c.args)}`
			};
		})
	);
}
