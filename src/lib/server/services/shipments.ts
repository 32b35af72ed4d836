/**
 * Shipments to dealers: starting a draft, its note, deleting it, and reading them back. Packing
 * is in shipment-packing.ts, dispatch in shipment-dispatch.ts, the shared rules in shipment-rules.ts.
 */
import { and, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { modules, organisations, shipmentItems, shipments, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError } from '$lib/server/errors';
import { recordAudit } from './audit';
import { businessYear } from './calendar';
import { nextYearlyReference } from './sequences';
import { assertDraft, assertStaff, itemsOf, loadShipment, type Shipment } from './shipment-rules';

/**
 * Starts a draft shipment to an active dealer. The reference SH-{year}-{NNNN} is the
 * next number of the year, taken inside the write transaction so two people starting
 * shipments at once get different, consecutive references.
 */
export async function createShipment(
	db: Db,
	actor: Actor,
	input: { dealerOrgId: number; note?: string | null },
	now = new Date()
): Promise<Shipment> {
	assertStaff(actor);
	const year = await businessYear(db, now);
	return writeTx(db, async (tx) => {
		const [dealer] = await tx
			.select()
			.from(organisations)
			.where(and(eq(organisations.id, input.dealerOrgId), eq(organisations.kind, 'dealer')));
		if (!dealer)
			throw new InvalidInputError('That dealer does not exist.', [
				{ path: 'dealerOrgId', message: 'Choose a dealer from the list.' }
			]);
		if (!dealer.active)
			throw new ConflictError(`${dealer.name} is deactivated and cannot receive new shipments.`);
		const reference = await nextYearlyReference(tx, shipments, shipments.reference, {
			code: 'SH',
			year,
			width: 4
		});
		const [s] = await tx
			.insert(shipments)
			.values({
				reference,
				dealerOrgId: dealer.id,
				note: input.note || null,
				createdBy: actor.userId!,
				createdAt: now
			})
			.returning();
		await recordAudit(tx, actor, {
			action: 'shipment.create',
			entity: 'shipment',
			entityId: reference,
			after: { dealer: dealer.name, note: s.note },
			at: now
		});
		return s;
	});
}

/** Changes a draft's note (what the packer or the dealer should know). */
export async function updateShipmentNote(
	db: Db,
	actor: Actor,
	shipmentId: number,
	note: string | null | undefined,
	now = new Date()
) {
	assertStaff(actor);
	return writeTx(db, async (tx) => {
		const s = await loadShipment(tx, shipmentId);
		await assertDraft(tx, s);
		const value = note?.trim() || null;
		await tx.update(shipments).set({ note: value }).where(eq(shipments.id, s.id));
		await recordAudit(tx, actor, {
			action: 'shipment.note',
			entity: 'shipment',
			entityId: s.reference,
			before: { note: s.note },
			after: { note: value },
			at: now
		});
		return { note: value };
	});
}

/** Deletes a draft and its list; the modules stay in stock. A dispatched shipment stays forever. */
export async function deleteDraftShipment(
	db: Db,
	actor: Actor,
	shipmentId: number,
	now = new Date()
) {
	assertStaff(actor);
	return writeTx(db, async (tx) => {
		const s = await loadShipment(tx, shipmentId);
		await assertDraft(tx, s);
		const items = await tx
			.delete(shipmentItems)
			.where(eq(shipmentItems.shipmentId, s.id))
			.returning({ moduleId: shipmentItems.moduleId });
		await tx.delete(shipments).where(eq(shipments.id, s.id));
		const serials = items.length
			? (
					await tx
						.select({ serial: modules.serial })
						.from(modules)
						.where(
							inArray(
								modules.id,
								items.map((i) => i.moduleId)
							)
						)
				).map((m) => m.serial)
			: [];
		await recordAudit(tx, actor, {
			action: 'shipment.delete',
			entity: 'shipment',
			entityId: s.reference,
			before: { dealerOrgId: s.dealerOrgId, note: s.note, serials },
			at: now
		});
		return { reference: s.reference };
	});
}

/** Shipments, newest first, with dealer and module count. */
export async function listShipments(db: Db, actor: Actor, opts: { limit?: number } = {}) {
	assertStaff(actor);
	return db
		.select({
			id: shipments.id,
			reference: shipments.reference,
			status: shipments.status,
			note: shipments.note,
			createdAt: shipments.createdAt,
			dispatchedAt: shipments.dispatchedAt,
			dealerName: organisations.name,
			dealerActive: organisations.active,
			count: sql<number>`count(${shipmentItems.moduleId})`.mapWith(Number)
		})
		.from(shipments)
		.innerJoin(organisations, eq(shipments.dealerOrgId, organisations.id))
		.leftJoin(shipmentItems, eq(shipmentItems.shipmentId, shipments.id))
		.groupBy(shipments.id)
		.orderBy(desc(shipments.id))
		.limit(opts.limit ?? 200);
}

/** One shipment with its dealer, the assembler (sender), who made and dispatched it, and its modules (serial, model, state, rated data). */
export async function getShipment(db: Db, actor: Actor, shipmentId: number) {
	assertStaff(actor);
	const s = await loadShipment(db, shipmentId);
	const [dealer] = await db
		.select({
			id: organisations.id,
			name: organisations.name,
			contactEmail: organisations.contactEmail,
			region: organisations.region,
			active: organisations.active
		})
		.from(organisations)
		.where(eq(organisations.id, s.dealerOrgId));
	const people = await db
		.select({ id: users.id, name: users.name })
		.from(users)
		.where(inArray(users.id, [s.createdBy, s.dispatchedBy ?? -1]));
	const nameOf = (id: number | null) => people.find((p) => p.id === id)?.name ?? null;
	const [assembler] = await db
		.select({
			name: organisations.name,
			contactEmail: organisations.contactEmail,
			region: organisations.region
		})
		.from(organisations)
		.where(eq(organisations.kind, 'assembler'))
		.limit(1);
	return {
		shipment: s,
		dealer,
		assembler: assembler ?? null,
		createdByName: nameOf(s.createdBy),
		dispatchedByName: nameOf(s.dispatchedBy),
		items: await itemsOf(db, s.id)
	};
}
