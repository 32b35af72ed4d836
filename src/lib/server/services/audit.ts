import { desc, eq } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { auditLog, moduleEvents, type EventKind } from '$lib/server/db/schema';
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

/** The newest audit entries, optionally for one entity type. */
export async function listAudit(db: Db, opts: { entity?: string; limit?: number } = {}) {
	const q = db.select().from(auditLog);
	const filtered = opts.entity ? q.where(eq(auditLog.entity, opts.entity)) : q;
	return filtered.orderBy(desc(auditLog.id)).limit(opts.limit ?? 200);
}
