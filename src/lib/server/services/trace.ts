import { CAUTIONS_IN_BRIEF } from '$lib/safety';
import Papa from 'papaparse';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { InvalidInputError } from '$lib/server/errors';
import { neutraliseCell } from '$lib/domain/factory-csv';
import { STATE_LABELS } from '$lib/module-states';
import type { TraceQuery } from '$lib/schemas/trace';
import { sendMail } from '$lib/server/mail';
import { fleetSearch } from '$lib/schemas/fleet';
import { TRACE_LIMIT, traceModules } from './trace-query';

export {
	TRACE_LIMIT,
	traceJson,
	traceJsonBytes,
	traceModules,
	type TraceItem
} from './trace-query';

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
