import { and, count, desc, eq, gte, inArray, like, lt, or, type SQL } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { auditLog, claims, moduleEvents, shipments, type EventKind } from '$lib/server/db/schema';
import {
	changedFields,
	ENTITY_LABELS,
	recordHref,
	type FieldChange
} from '$lib/domain/audit-trail';
import Papa from 'papaparse';
import { containsText } from '$lib/server/db/like';
import { neutraliseCell } from '$lib/domain/factory-csv';
import { addCalendarDays, startOfCalendarDay } from '$lib/domain/calendar';
import type { AuditQuery } from '$lib/schemas/audit';
import type { Actor } from '$lib/server/actor';

type Conn = Db | Tx;

/** Appends one change to the audit log: who, when, what, and the record before and after. */
export async function recordAudit(
	conn: Conn,
	actor: Actor,
	entry: {
		action: string;
		entity: string;
		entityId: string | number;
		before?: unknown;
		after?: unknown;
		at?: Date;
	}
): Promise<void> {
	await conn.insert(auditLog).values({
		at: entry.at ?? new Date(),
		actorUserId: actor.userId,
		actorLabel: actor.label,
		action: entry.action,
		entity: entry.entity,
		entityId: String(entry.entityId),
		before: entry.before === undefined ? null : JSON.stringify(entry.before),
		after: entry.after === undefined ? null : JSON.stringify(entry.after)
	});
}

/** Adds an event to a module's timeline. */
export async function recordEvent(
	conn: Conn,
	actor: Actor,
	event: { moduleId: number; kind: EventKind; summary: string; detail?: unknown; at?: Date }
): Promise<void> {
	await conn.insert(moduleEvents).values({
		moduleId: event.moduleId,
		kind: event.kind,
		at: event.at ?? new Date(),
		actorUserId: actor.userId,
		actorLabel: actor.label,
		summary: event.summary,
		detail: event.detail === undefined ? null : JSON.stringify(event.detail)
	});
}

/** Most entries one CSV export carries. */
export const AUDIT_EXPORT_CAP = 50_000;

function conditions(q: AuditQuery, timeZone: string): SQL | undefined {
	const where: (SQL | undefined)[] = [];
	if (q.actor) where.push(containsText(auditLog.actorLabel, q.actor));
	if (q.entity) where.push(eq(auditLog.entity, q.entity));
	if (q.entityId) where.push(eq(auditLog.entityId, q.entityId));
	if (q.action) {
		// `claim` finds every claim action; `claim.decide` just that one.
		where.push(
			q.action.includes('.')
				? eq(auditLog.action, q.action)
				: or(eq(auditLog.action, q.action), like(auditLog.action, `${q.action}.%`))
		);
	}
	// Whole days on the assembler's calendar: from its first instant to the next day's first.
	if (q.from) where.push(gte(auditLog.at, startOfCalendarDay(q.from, timeZone)));
	if (q.to) where.push(lt(auditLog.at, startOfCalendarDay(addCalendarDays(q.to, 1), timeZone)));
	return where.length ? and(...where) : undefined;
}

export interface AuditEntry {
	id: number;
	at: Date;
	actorLabel: string;
	action: string;
	entity: string;
	entityLabel: string;
	entityId: string;
	href: string | null;
	changes: FieldChange[];
	moreChanges: number;
}

async function referenceIds(db: Db, rows: { entity: string; entityId: string }[]) {
	const ids = new Map<string, number>();
	const refs = (entity: string) =>
		[...new Set(rows.filter((r) => r.entity === entity).map((r) => r.entityId))].slice(0, 500);
	const claimRefs = refs('claim');
	const shipmentRefs = refs('shipment');
	if (claimRefs.length)
		for (const c of await db
			.select({ id: claims.id, ref: claims.reference })
			.from(claims)
			.where(inArray(claims.reference, claimRefs)))
			ids.set(`claim:${c.ref}`, c.id);
	if (shipmentRefs.length)
		for (const s of await db
			.select({ id: shipments.id, ref: shipments.reference })
			.from(shipments)
			.where(inArray(shipments.reference, shipmentRefs)))
			ids.set(`shipment:${s.ref}`, s.id);
	return ids;
}

/**
 * One page of the audit trail, newest first, filtered by who, what, when and action, each
 * entry with the fields it changed and a link to its record. Admin only (the caller guards).
 * `timeZone` is the assembler's: `from`/`to` are calendar days there.
 */
export async function searchAudit(db: Db, q: AuditQuery, timeZone = 'UTC') {
	const page = q.page ?? 1;
	const pageSize = q.pageSize ?? 50;
	const where = conditions(q, timeZone);
	const [{ total }] = await db.select({ total: count() }).from(auditLog).where(where);
	const rows = await db
		.select()
		.from(auditLog)
		.where(where)
		.orderBy(desc(auditLog.id))
		.limit(pageSize)
		.offset((page - 1) * pageSize);
	const ids = await referenceIds(db, rows);
	const items: AuditEntry[] = rows.map((r) => {
		const { changes, more } = changedFields(r.before, r.after);
		return {
			id: r.id,
			at: r.at,
			actorLabel: r.actorLabel,
			action: r.action,
			entity: r.entity,
			entityLabel: ENTITY_LABELS[r.entity] ?? r.entity,
			entityId: r.entityId,
			href: recordHref(r.entity, r.entityId, ids),
			changes,
			moreChanges: more
		};
	});
	return { items, total, page, pageSize };
}

/** The filtered trail as CSV (RFC 4180, cells neutralised against formula injection). */
export async function auditCsv(db: Db, q: AuditQuery, timeZone = 'UTC'): Promise<string> {
	const rows = await db
		.select()
		.from(auditLog)
		.where(conditions(q, timeZone))
		.orderBy(desc(auditLog.id))
		.limit(AUDIT_EXPORT_CAP);
	const lines = [
		['id', 'at_utc', 'who', 'action', 'record', 'record_id', 'changes', 'before', 'after']
	];
	for (const r of rows) {
		const { changes } = changedFields(r.before, r.after);
		lines.push([
			String(r.id),
			r.at.toISOString(),
			r.actorLabel,
			r.action,
			r.entity,
			r.entityId,
			changes.map((c) => `${c.field}: ${c.before} → ${c.after}`).join('; '),
			r.before ?? '',
			r.after ?? ''
		]);
	}
	const cells = lines.map((l) => l.map(neutraliseCell));
	return '\uFEFF' + Papa.unparse(cells, { newline: '\r\n' }) + '\r\n';
}

/** Distinct actions and record types seen, for the filter's choices. */
export async function auditFacets(db: Db) {
	const actions = await db
		.selectDistinct({ action: auditLog.action })
		.from(auditLog)
		.orderBy(auditLog.action)
		.limit(500);
	const entities = await db
		.selectDistinct({ entity: auditLog.entity })
		.from(auditLog)
		.orderBy(auditLog.entity)
		.limit(100);
	return { actions: actions.map((a) => a.action), entities: entities.map((e) => e.entity) };
}
