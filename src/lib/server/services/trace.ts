import { and, eq, gte, lt, sql, type SQL } from 'drizzle-orm';
import { CAUTIONS_IN_BRIEF } from '$lib/safety';
import Papa from 'papaparse';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { moduleModels, modules, organisations, sites, systems } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { InvalidInputError } from '$lib/server/errors';
import { neutraliseCell } from '$lib/domain/factory-csv';
import { STATE_LABELS } from '$lib/module-states';
import type { TraceQuery } from '$lib/schemas/trace';
import { sendMail } from '$lib/server/mail';
import { fleetSearch } from '$lib/schemas/fleet';
import { addCalendarDays, startOfCalendarDay } from '$lib/domain/calendar';
import { assemblerCalendar } from './calendar';

export const TRACE_LIMIT = 50_000;

function conditions(q: TraceQuery, timeZone: string): SQL[] {
	const where: SQL[] = [];
	if (q.lot)
		where.push(
			sql`${modules.id} IN (SELECT module_id FROM module_cell_lots WHERE lot_code = ${q.lot})`
		);
	if (q.model) where.push(eq(moduleModels.code, q.model));
	// Build dates are days on the assembler's calendar: a range runs from the first day's
	// start to the end of the last day in its time zone.
	if (q.builtFrom) where.push(gte(modules.builtAt, startOfCalendarDay(q.builtFrom, timeZone)));
	if (q.builtTo)
		where.push(lt(modules.builtAt, startOfCalendarDay(addCalendarDays(q.builtTo, 1), timeZone)));
	if (q.importId)
		where.push(
			sql`${modules.id} IN (SELECT module_id FROM factory_tests WHERE import_id = ${q.importId})`
		);
	return where;
}

/**
 * Finds the modules affected by a cell lot, model, build date range or import, and where
 * each is now: in the workshop, at which dealer, at which site. For the assembler's staff.
 */
export async function traceModules(db: Db, q: TraceQuery) {
	const { timeZone } = await assemblerCalendar(db);
	// One JSON value back instead of one result row per module: libSQL's row
	// materialisation and drizzle's mapping cost ~6 µs a row, JSON.parse well under 1.
	const v = db
		.select({
			id: modules.id,
			serial: modules.serial,
			state: modules.state,
			model: sql`${moduleModels.code}`.as('model'),
			builtAt: modules.builtAt,
			dealerId: modules.dealerOrgId,
			dealer: sql`${organisations.name}`.as('dealer'),
			site: sql`${sites.name}`.as('site'),
			system: sql`${systems.name}`.as('system')
		})
		.from(modules)
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.leftJoin(organisations, eq(modules.dealerOrgId, organisations.id))
		.leftJoin(systems, eq(modules.systemId, systems.id))
		.leftJoin(sites, eq(systems.siteId, sites.id))
		.where(and(...conditions(q, timeZone)))
		.orderBy(modules.serial)
		.limit(TRACE_LIMIT + 1)
		.as('v');
	const [{ json }] = await db
		.select({
			json: sql<string>`json_group_array(json_array(${v.id}, ${v.serial}, ${v.state}, ${v.model}, ${v.builtAt}, ${v.dealerId}, ${v.dealer}, ${v.site}, ${v.system}))`
		})
		.from(v);
	type Packed = [
		number,
		string,
		string,
		string,
		number | null,
		number | null,
		string | null,
		string | null,
		string | null
	];
	const rows = (JSON.parse(json) as Packed[]).map(
		([id, serial, state, model, built, dealerId, dealer, site, system]) => ({
			id,
			serial,
			state: state as (typeof modules.$inferSelect)['state'],
			model,
			builtAt: built === null ? null : new Date(built),
			dealerId,
			dealer,
			site,
			system
		})
	);
	const truncated = rows.length > TRACE_LIMIT;
	const items = rows.slice(0, TRACE_LIMIT).map((r) => ({ ...r, whereNow: whereNow(r) }));
	const byDealer = new Map<
		string,
		{ dealer: string; dealerId: number | null; count: number; atSites: number }
	>();
	for (const r of items) {
		const key = r.dealer ?? 'Tidewater Cellworks (not shipped)';
		const entry = byDealer.get(key) ?? { dealer: key, dealerId: r.dealerId, count: 0, atSites: 0 };
		entry.count++;
		if (r.site) entry.atSites++;
		byDealer.set(key, entry);
	}
	return {
		items,
		truncated,
		total: items.length,
		byDealer: [...byDealer.values()].sort((a, b) => b.count - a.count)
	};
}

function whereNow(r: {
	state: string;
	dealer: string | null;
	site: string | null;
	system: string | null;
}) {
	if (r.site) return `${r.site} (${r.system}), via ${r.dealer ?? 'Tidewater Cellworks'}`;
	if (r.dealer) return `At ${r.dealer}`;
	return `Workshop — ${STATE_LABELS[r.state] ?? r.state}`;
}

export async function traceCsv(db: Db, q: TraceQuery): Promise<string> {
	const { items } = await traceModules(db, q);
	return Papa.unparse({
		fields: ['serial', 'model', 'state', 'built_at', 'dealer', 'site', 'system'],
		data: items.map((r) =>
			[
				r.serial,
				r.model,
				STATE_LABELS[r.state] ?? r.state,
				r.builtAt?.toISOString() ?? '',
				r.dealer ?? '',
				r.site ?? '',
				r.system ?? ''
			].map((v) => neutraliseCell(String(v)))
		)
	});
}

/**
 * Sends each affected dealer one service notice listing its own units, and records the
 * notice on every affected module's timeline (shipped units only: the rest is still ours).
 * @returns how many dealers were told about how many modules
 */
export async function sendServiceNotice(
	db: Db,
	actor: Actor,
	q: TraceQuery,
	notice: { subject: string; body: string },
	now = new Date()
) {
	const { items, truncated } = await traceModules(db, q);
	if (truncated)
		throw new InvalidInputError(
			`More than ${TRACE_LIMIT} modules match; narrow the trace before sending a notice.`
		);
	const shipped = items.filter((i) => i.dealerId !== null);
	if (!shipped.length)
		throw new InvalidInputError(
			'None of the traced modules has left the workshop: there is no dealer to notify.'
		);
	const groups = new Map<number, typeof shipped>();
	for (const i of shipped) groups.set(i.dealerId!, [...(groups.get(i.dealerId!) ?? []), i]);
	const dealers = await db.select().from(organisations);

	const criteria = describeTrace(q);
	await withWriteLock(db, () =>
		db.$client.batch(
			[
				{
					sql: `INSERT INTO module_events (module_id, kind, at, actor_user_id, actor_label, summary, detail)
					      SELECT value, 'service_notice', ?, ?, ?, ?, ? FROM json_each(?)`,
					args: [
						now.getTime(),
						actor.userId,
						actor.label,
						`Service notice sent to the dealer: ${notice.subject}`,
						JSON.stringify({ criteria }),
						JSON.stringify(shipped.map((s) => s.id))
					]
				},
				{
					sql: `INSERT INTO audit_log (at, actor_user_id, actor_label, action, entity, entity_id, after) VALUES (?, ?, ?, 'trace.notice', 'trace', ?, ?)`,
					args: [
						now.getTime(),
						actor.userId,
						actor.label,
						criteria,
						JSON.stringify({
							subject: notice.subject,
							dealers: groups.size,
							modules: shipped.length
						})
					]
				}
			],
			'write'
		)
	);
	for (const [dealerId, units] of groups) {
		const org = dealers.find((d) => d.id === dealerId);
		if (!org?.contactEmail) continue;
		await sendMail(db, {
			to: org.contactEmail,
			subject: `Service notice from Tidewater Cellworks: ${notice.subject}`,
			text: `${notice.body}\n\nThis notice concerns ${units.length} module${units.length === 1 ? '' : 's'} shipped to ${org.name}:\n\n${units.map((u) => `  ${u.serial}  ${u.model}  ${u.site ? `installed at ${u.site}` : 'not installed yet'}`).join('\n')}\n\n(Selected by ${criteria}.)\n${CAUTIONS_IN_BRIEF}`,
			// The same selection in the dealer's own fleet view (dealer scope applies there).
			about: `/fleet?${fleetSearch({ lot: q.lot, model: q.model, builtFrom: q.builtFrom, builtTo: q.builtTo, importId: q.importId })}`
		});
	}
	return { dealers: groups.size, modules: shipped.length };
}

export function describeTrace(q: TraceQuery): string {
	const parts = [
		q.lot && `cell lot ${q.lot}`,
		q.model && `model ${q.model}`,
		q.builtFrom && `built from ${q.builtFrom}`,
		q.builtTo && `built until ${q.builtTo}`,
		q.importId && `factory import #${q.importId}`
	];
	return parts.filter(Boolean).join(', ');
}
