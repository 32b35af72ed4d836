import { dataVersion, readerOf, type Db } from '$lib/server/db';
import type { ModuleState } from '$lib/server/db/schema';
import { STATE_LABELS } from '$lib/module-states';
import type { TraceQuery } from '$lib/schemas/trace';
import { addCalendarDays, startOfCalendarDay } from '$lib/domain/calendar';
import { assemblerCalendar } from './calendar';

export const TRACE_LIMIT = 50_000;
const NOT_SHIPPED = 'Tidewater Cellworks (not shipped)';

/** The criteria as SQL over `modules` and `module_models`; values bound. */
function conditions(q: TraceQuery, timeZone: string) {
	const where: string[] = [];
	const args: (string | number)[] = [];
	const add = (sql: string, ...values: (string | number)[]) => {
		where.push(sql);
		args.push(...values);
	};
	// IN (subquery) starts from the lot's (or import's) covering index.
	if (q.lot)
		add('modules.id IN (SELECT module_id FROM module_cell_lots WHERE lot_code = ?)', q.lot);
	if (q.model) add('module_models.code = ?', q.model);
	// Build dates are days on the assembler's calendar: a range runs from the first day's
	// start to the end of the last day in its time zone.
	if (q.builtFrom)
		add('modules.built_at >= ?', startOfCalendarDay(q.builtFrom, timeZone).getTime());
	if (q.builtTo)
		add(
			'modules.built_at < ?',
			startOfCalendarDay(addCalendarDays(q.builtTo, 1), timeZone).getTime()
		);
	if (q.importId)
		add('modules.id IN (SELECT module_id FROM factory_tests WHERE import_id = ?)', q.importId);
	return { sql: where.length ? `WHERE ${where.join(' AND ')}` : '', args };
}

/**
 * The whole answer of a trace as one JSON text, built by SQLite: `{ total, truncated,
 * byDealer: [{ dealer, dealerId, count, atSites }], items: [{ serial, state, model, builtAt,
 * dealer, site, system, whereNow }] }`, items by serial. A lot of 1,500 modules is one result
 * value instead of 1,500 rows turned into objects and encoded again. `internal` adds each
 * item's module and dealer id (for the service notice).
 */
export async function traceJson(db: Db, q: TraceQuery, internal = false): Promise<string> {
	return (await keptTrace(db, q, internal)).json;
}

/**
 * `traceJson` as UTF-8 bytes, for the API: encoding a lot's ~250 KB answer again for every
 * request cost more of the event loop than finding it; the bytes are kept with the text.
 */
export async function traceJsonBytes(db: Db, q: TraceQuery): Promise<Uint8Array<ArrayBuffer>> {
	const answer = await keptTrace(db, q, false);
	return (answer.bytes ??= Buffer.from(answer.json, 'utf8'));
}

type Answer = { version: string | null; json: string; bytes?: Uint8Array<ArrayBuffer> };

async function keptTrace(db: Db, q: TraceQuery, internal: boolean): Promise<Answer> {
	// The answer is the same for every member of staff until the data changes: kept per data
	// version (read first; see dataVersion), a few at a time (a lot's answer is ~250 KB).
	const version = await dataVersion(db);
	const key = JSON.stringify([q.lot, q.model, q.builtFrom, q.builtTo, q.importId, internal]);
	let answers = answersOf.get(db);
	if (!answers) answersOf.set(db, (answers = new Map()));
	const hit = version === null ? undefined : answers.get(key);
	if (hit && hit.version === version) return hit;
	const answer: Answer = { version, json: await computeTrace(db, q, internal) };
	if (version !== null && answer.json.length <= MAX_KEPT_CHARS / 4) {
		answers.delete(key);
		answers.set(key, answer);
		// At most 16 answers and MAX_KEPT_CHARS in all (a wide model or date range is ~10 MB of
		// text, its bytes as much again once asked for), the least recently kept going first.
		const size = (a: Answer) => a.json.length + (a.bytes?.byteLength ?? 0);
		let total = 0;
		for (const a of answers.values()) total += size(a);
		while (answers.size > 16 || total > MAX_KEPT_CHARS) {
			const [first, a] = answers.entries().next().value!;
			answers.delete(first);
			total -= size(a);
		}
	}
	return answer;
}
/** Characters (and bytes) of kept trace answers in all. */
const MAX_KEPT_CHARS = 32 * 1024 * 1024;
const answersOf = new WeakMap<Db, Map<string, Answer>>();

async function computeTrace(db: Db, q: TraceQuery, internal: boolean): Promise<string> {
	const { timeZone } = await assemblerCalendar(db);
	const where = conditions(q, timeZone);
	const iso = `CASE WHEN built_at IS NULL THEN NULL ELSE strftime('%Y-%m-%dT%H:%M:%fZ', built_at / 1000.0, 'unixepoch') END`;
	const item = internal
		? `'id', id, 'serial', serial, 'state', state, 'model', model, 'builtAt', ${iso}, 'dealerId', dealer_id, 'dealer', dealer, 'site', site, 'system', system`
		: `'serial', serial, 'state', state, 'model', model, 'builtAt', ${iso}, 'dealer', dealer, 'site', site, 'system', system`;
	const r = await readerOf(db).execute({
		// v: the matches in serial order, one past the limit (to tell a truncated answer).
		sql: `WITH v AS MATERIALIZED (
				SELECT modules.serial, modules.id, modules.state, module_models.code AS model,
					modules.built_at, modules.dealer_org_id AS dealer_id, organisations.name AS dealer,
					sites.name AS site, systems.name AS system
				FROM modules
				JOIN module_models ON module_models.id = modules.model_id
				LEFT JOIN organisations ON organisations.id = modules.dealer_org_id
				LEFT JOIN systems ON systems.id = modules.system_id
				LEFT JOIN sites ON sites.id = systems.site_id
				${where.sql}
				ORDER BY modules.serial LIMIT ${TRACE_LIMIT + 1}
			),
			cut AS (SELECT CASE WHEN count(*) > ${TRACE_LIMIT} THEN max(serial) END AS past FROM v),
			shown AS (SELECT v.* FROM v, cut WHERE cut.past IS NULL OR v.serial < cut.past)
			SELECT json_object(
				'total', (SELECT count(*) FROM shown),
				'truncated', json(CASE WHEN (SELECT past FROM cut) IS NULL THEN 'false' ELSE 'true' END),
				'byDealer', (SELECT json_group_array(json_object('dealer', name, 'dealerId', dealer_id, 'count', n, 'atSites', at_sites) ORDER BY n DESC, first)
					FROM (SELECT coalesce(dealer, ?) AS name, min(serial) AS first, dealer_id, count(*) AS n, count(site) AS at_sites
						FROM shown GROUP BY 1)),
				'items', (SELECT json_group_array(json_object(${item},
						'whereNow', CASE
							WHEN site IS NOT NULL THEN site || ' (' || system || '), via ' || coalesce(dealer, 'Tidewater Cellworks')
							WHEN dealer IS NOT NULL THEN 'At ' || dealer
							ELSE 'Workshop — ' || coalesce(? ->> state, state)
						END) ORDER BY serial) FROM shown)
			)`,
		args: [...where.args, NOT_SHIPPED, JSON.stringify(STATE_LABELS)]
	});
	return String(r.rows[0][0]);
}

export type TraceItem = {
	id: number;
	serial: string;
	state: ModuleState;
	model: string;
	builtAt: Date | null;
	dealerId: number | null;
	dealer: string | null;
	site: string | null;
	system: string | null;
	whereNow: string;
};

/**
 * Finds the modules affected by a cell lot, model, build date range or import, and where
 * each is now: in the workshop, at which dealer, at which site. For the assembler's staff.
 */
export async function traceModules(db: Db, q: TraceQuery) {
	const r = JSON.parse(await traceJson(db, q, true)) as {
		total: number;
		truncated: boolean;
		byDealer: { dealer: string; dealerId: number | null; count: number; atSites: number }[];
		items: (Omit<TraceItem, 'builtAt'> & { builtAt: string | null })[];
	};
	return {
		...r,
		items: r.items.map((i): TraceItem => ({
			...i,
			builtAt: i.builtAt === null ? null : new Date(i.builtAt)
		}))
	};
}
