import Papa from 'papaparse';
import { readerOf, type Db } from '$lib/server/db';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { neutraliseCell } from '$lib/domain/factory-csv';
import { STATE_LABELS } from '$lib/module-states';
import { FLEET_STATES, type FleetQuery } from '$lib/schemas/fleet';
import { conditions, whereOf } from './fleet-filters';

/** Most rows one CSV export carries: the whole register at its design size. */
export const EXPORT_CAP = 200_000;

const iso = (ms: number | null) => (ms === null ? '' : new Date(ms).toISOString());

/** ORDER BY of a view, as the table shows it: see `listModulesJson`. */
async function orderOf(
	db: Db,
	query: FleetQuery
): Promise<{ sql: string; args: (string | number)[] }> {
	const { sort, dir } = query;
	const byPlace = (col: string, keys: (string | number)[]) => ({
		sql: `CASE ${col} ${keys.map((_, i) => `WHEN ? THEN ${i}`).join(' ')} ELSE ${dir === 'asc' ? keys.length : -1} END ${dir}, modules.id ${dir}`,
		args: keys
	});
	const ids = async (sql: string) =>
		JSON.parse(String((await readerOf(db).execute(sql)).rows[0][0])) as number[];
	if (sort === 'state') return byPlace('modules.state', FLEET_STATES);
	if (sort === 'model')
		return byPlace(
			'modules.model_id',
			await ids('SELECT json_group_array(id) FROM (SELECT id FROM module_models ORDER BY code)')
		);
	if (sort === 'dealer')
		return byPlace(
			'modules.dealer_org_id',
			await ids('SELECT json_group_array(id) FROM (SELECT id FROM organisations ORDER BY name, id)')
		);
	const col = {
		serial: 'serial',
		builtAt: 'built_at',
		testedAt: 'tested_at',
		shippedAt: 'shipped_at'
	}[sort];
	const nullsLast = sort !== 'serial' && dir === 'asc' ? ' NULLS LAST' : '';
	return { sql: `modules.${col} ${dir}${nullsLast}, modules.id ${dir}`, args: [] };
}

/**
 * Every module of the view (up to EXPORT_CAP) as CSV: same filters, scope and order as the
 * table. Every cell goes through `neutraliseCell`, so a site called "=HYPERLINK(…)" stays
 * text in a spreadsheet; a UTF-8 BOM lets Excel read accented names. SQLite hands the rows
 * over as one JSON array (materialising 200,000 result rows one by one costs ~4 s); the
 * LIMITed subquery runs as a co-routine, so rows reach json_group_array in its order.
 */
export async function exportModules(db: Db, actor: Actor, query: FleetQuery): Promise<string> {
	const conds = conditions(query, dealerScopeOf(actor));
	const where = conds ? whereOf(conds) : { sql: 'WHERE 0', args: [] };
	const order = await orderOf(db, query);
	const r = await readerOf(db).execute({
		sql: `SELECT json_group_array(json_array(serial, model, state, dealer, built_at, tested_at, test_outcome, shipped_at, cell_lots, site))
			FROM (SELECT modules.serial, module_models.code AS model, modules.state, organisations.name AS dealer,
				modules.built_at, modules.tested_at, modules.test_outcome, modules.shipped_at, modules.cell_lots,
				sites.name AS site
				FROM modules
				JOIN module_models ON module_models.id = modules.model_id
				LEFT JOIN organisations ON organisations.id = modules.dealer_org_id
				LEFT JOIN systems ON systems.id = modules.system_id
				LEFT JOIN sites ON sites.id = systems.site_id
				${where.sql} ORDER BY ${order.sql} LIMIT ?)`,
		args: [...where.args, ...order.args, EXPORT_CAP]
	});
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
	const data = (JSON.parse(String(r.rows[0][0])) as Row[]).map(
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
