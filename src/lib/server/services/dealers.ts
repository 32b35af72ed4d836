import { and, asc, count, eq, sql } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { organisations, shipmentItems, shipments, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, NotFoundError } from '$lib/server/errors';
import type { DealerInput } from '$lib/schemas/dealer';
import { recordAudit } from './audit';

type Organisation = typeof organisations.$inferSelect;

const snapshot = (o: Pick<Organisation, 'name' | 'contactEmail' | 'region' | 'active'>) => ({
	name: o.name,
	contactEmail: o.contactEmail,
	region: o.region,
	active: o.active
});

/** Names are unique across all organisations, ignoring case and spacing differences at the ends. */
async function assertNameFree(tx: Tx, name: string, exceptId?: number) {
	const [clash] = await tx
		.select({ id: organisations.id, name: organisations.name })
		.from(organisations)
		.where(sql`lower(${organisations.name}) = lower(${name})`);
	if (clash && clash.id !== exceptId)
		throw new ConflictError(
			`An organisation called ${clash.name} already exists. Choose another name, or edit that one.`
		);
}

async function loadDealer(conn: Db | Tx, id: number): Promise<Organisation> {
	const [org] = await conn
		.select()
		.from(organisations)
		.where(and(eq(organisations.id, id), eq(organisations.kind, 'dealer')));
	if (!org) throw new NotFoundError(`There is no dealer ${id}.`);
	return org;
}

/** Every dealer with how many modules it has received (dispatched shipments) and how many people it has. */
export async function listDealers(db: Db) {
	const dealers = await db
		.select()
		.from(organisations)
		.where(eq(organisations.kind, 'dealer'))
		.orderBy(asc(organisations.name));
	const shipped = await db
		.select({ orgId: shipments.dealerOrgId, n: count() })
		.from(shipmentItems)
		.innerJoin(shipments, eq(shipmentItems.shipmentId, shipments.id))
		.where(eq(shipments.status, 'dispatched'))
		.groupBy(shipments.dealerOrgId);
	const people = await db
		.select({ orgId: users.organisationId, n: count() })
		.from(users)
		.groupBy(users.organisationId);
	const shippedBy = new Map(shipped.map((r) => [r.orgId, r.n]));
	const peopleBy = new Map(people.map((r) => [r.orgId, r.n]));
	return dealers.map((d) => ({
		...d,
		modulesShipped: shippedBy.get(d.id) ?? 0,
		userCount: peopleBy.get(d.id) ?? 0
	}));
}

/** Active dealers only, for choosing who a new shipment goes to. */
export async function listActiveDealers(db: Db) {
	return db
		.select({ id: organisations.id, name: organisations.name, region: organisations.region })
		.from(organisations)
		.where(and(eq(organisations.kind, 'dealer'), eq(organisations.active, true)))
		.orderBy(asc(organisations.name));
}

/** One dealer with its people and its count of modules received. */
export async function getDealer(db: Db, id: number) {
	const dealer = await loadDealer(db, id);
	const people = await db
		.select({
			id: users.id,
			name: users.name,
			email: users.email,
			role: users.role,
			active: users.active,
			hasPassword: users.passwordHash,
			lastSignInAt: users.lastSignInAt
		})
		.from(users)
		.where(eq(users.organisationId, id))
		.orderBy(asc(users.name));
	const [shipped] = await db
		.select({ n: count() })
		.from(shipmentItems)
		.innerJoin(shipments, eq(shipmentItems.shipmentId, shipments.id))
		.where(and(eq(shipments.dealerOrgId, id), eq(shipments.status, 'dispatched')));
	const [drafts] = await db
		.select({ n: count() })
		.from(shipments)
		.where(and(eq(shipments.dealerOrgId, id), eq(shipments.status, 'draft')));
	return {
		dealer,
		users: people.map((u) => ({ ...u, hasPassword: !!u.hasPassword })),
		modulesShipped: shipped?.n ?? 0,
		draftShipments: drafts?.n ?? 0
	};
}

/**
 * Adds a dealer organisation. Its people are invited separately (People page).
 * @returns the new dealer's id
 */
export async function createDealer(
	db: Db,
	actor: Actor,
	input: DealerInput,
	now = new Date()
): Promise<number> {
	const values = {
		kind: 'dealer' as const,
		name: input.name,
		contactEmail: input.contactEmail,
		region: input.region ?? null,
		active: true
	};
	return writeTx(db, async (tx) => {
		await assertNameFree(tx, input.name);
		const [org] = await tx.insert(organisations).values(values).returning({ id: organisations.id });
		await recordAudit(tx, actor, {
			action: 'dealer.create',
			entity: 'organisation',
			entityId: org.id,
			after: snapshot(values),
			at: now
		});
		return org.id;
	});
}

/** Changes a dealer's name, contact address and region. Modules already shipped keep pointing at the same dealer. */
export async function updateDealer(
	db: Db,
	actor: Actor,
	id: number,
	input: DealerInput,
	now = new Date()
) {
	return writeTx(db, async (tx) => {
		const before = await loadDealer(tx, id);
		await assertNameFree(tx, input.name, id);
		const [after] = await tx
			.update(organisations)
			.set({ name: input.name, contactEmail: input.contactEmail, region: input.region ?? null })
			.where(eq(organisations.id, id))
			.returning();
		await recordAudit(tx, actor, {
			action: 'dealer.update',
			entity: 'organisation',
			entityId: id,
			before: snapshot(before),
			after: snapshot(after),
			at: now
		});
		return after;
	});
}

/**
 * Deactivates or reactivates a dealer. A deactivated dealer receives no new shipments
 * (drafts to it cannot be dispatched); its modules and people stay on record, but its
 * people can no longer sign in, and their open sessions end at once (the migration's
 * `organisations_end_sessions` trigger raises their session version).
 */
export async function setDealerActive(
	db: Db,
	actor: Actor,
	id: number,
	active: boolean,
	now = new Date()
) {
	return writeTx(db, async (tx) => {
		const before = await loadDealer(tx, id);
		if (before.active === active) return before;
		const [after] = await tx
			.update(organisations)
			.set({ active })
			.where(eq(organisations.id, id))
			.returning();
		await recordAudit(tx, actor, {
			action: active ? 'dealer.activate' : 'dealer.deactivate',
			entity: 'organisation',
			entityId: id,
			before: { active: before.active },
			after: { active },
			at: now
		});
		return after;
	});
}
