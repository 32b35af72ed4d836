/** Dispatching a draft shipment: the modules leave in one transaction, then the dealer is told. */
import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { moduleEvents, modules, organisations, shipments, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError } from '$lib/server/errors';
import { sendMail } from '$lib/server/mail';
import { shipmentDispatched } from '$lib/server/mail/templates/shipments';
import { fleetSearch } from '$lib/schemas/fleet';
import { recordAudit } from './audit';
import { businessDay } from './calendar';
import { endOf, mayBeShipped, statesFrom } from '$lib/domain/module-lifecycle';
import {
	assertDraft,
	assertStaff,
	candidates,
	itemsOf,
	loadShipment,
	refusal
} from './shipment-rules';

/**
 * Dispatches a draft: in one write transaction every module is checked again (still a
 * passed module in stock), marked shipped to the dealer with one timeline event each,
 * and the shipment is closed. Then the dealer's contact address and its active dealer
 * users get the list of serials by e-mail. The dispatch stands even if the e-mail is
 * refused, so that failure is returned (mail.error) for the page to show, not thrown.
 */
export async function dispatchShipment(db: Db, actor: Actor, shipmentId: number, now = new Date()) {
	assertStaff(actor);
	const { s, dealer, items } = await writeTx(db, async (tx) => {
		const s = await loadShipment(tx, shipmentId);
		await assertDraft(tx, s);
		const [dealer] = await tx
			.select()
			.from(organisations)
			.where(eq(organisations.id, s.dealerOrgId));
		if (!dealer.active)
			throw new ConflictError(
				`${dealer.name} is deactivated and cannot receive shipments. Reactivate the dealer, or delete this draft.`
			);
		const items = await itemsOf(tx, s.id);
		if (!items.length)
			throw new ConflictError(
				`${s.reference} has no modules on it yet; scan modules onto it before dispatch.`
			);
		const stale = items.filter((i) => !mayBeShipped(i.state));
		if (stale.length) {
			const found = await candidates(
				tx,
				s.id,
				stale.map((i) => i.serial)
			);
			const reasons = stale.map(
				(i) => refusal(found.get(i.serial)!) ?? `${i.serial} is ${i.state}`
			);
			throw new ConflictError(
				`${s.reference} cannot be dispatched: ${reasons.join('; ')}. Take ${stale.length === 1 ? 'it' : 'them'} off first.`
			);
		}
		const ids = items.map((i) => i.id);
		let shipped = 0;
		for (let i = 0; i < ids.length; i += 200) {
			const chunk = ids.slice(i, i + 200);
			const done = await tx
				.update(modules)
				.set({ state: endOf('ship'), dealerOrgId: dealer.id, shippedAt: now, updatedAt: now })
				.where(and(inArray(modules.id, chunk), inArray(modules.state, statesFrom('ship'))))
				.returning({ id: modules.id });
			shipped += done.length;
			await tx.insert(moduleEvents).values(
				chunk.map((moduleId) => ({
					moduleId,
					kind: 'shipped' as const,
					at: now,
					actorUserId: actor.userId,
					actorLabel: actor.label,
					summary: `Shipped to ${dealer.name} on ${s.reference}`,
					detail: JSON.stringify({ shipment: s.reference, dealerOrgId: dealer.id })
				}))
			);
		}
		if (shipped !== ids.length)
			throw new ConflictError(
				`Some modules on ${s.reference} changed while it was being dispatched. Reload and try again.`
			);
		await tx
			.update(shipments)
			.set({ status: 'dispatched', dispatchedAt: now, dispatchedBy: actor.userId })
			.where(eq(shipments.id, s.id));
		await recordAudit(tx, actor, {
			action: 'shipment.dispatch',
			entity: 'shipment',
			entityId: s.reference,
			before: { status: 'draft' },
			after: { status: 'dispatched', dealer: dealer.name, serials: items.map((i) => i.serial) },
			at: now
		});
		return { s, dealer, items };
	});

	const people = await db
		.select({ email: users.email })
		.from(users)
		.where(
			and(eq(users.organisationId, dealer.id), eq(users.role, 'dealer'), eq(users.active, true))
		);
	const to = [
		...new Set(
			[dealer.contactEmail, ...people.map((p) => p.email)]
				.filter((e): e is string => !!e)
				.map((e) => e.toLowerCase())
		)
	];
	const [assembler] = await db
		.select({ name: organisations.name })
		.from(organisations)
		.where(eq(organisations.kind, 'assembler'))
		.limit(1);
	const from = assembler?.name ?? 'Tidewater Cellworks';
	const result = {
		reference: s.reference,
		dealer: dealer.name,
		count: items.length,
		mail: { to, error: null as string | null }
	};
	if (!to.length) {
		result.mail.error = `${dealer.name} has no contact address or active dealer user, so no e-mail was sent.`;
		return result;
	}
	try {
		await sendMail(db, {
			to,
			...shipmentDispatched({
				reference: s.reference,
				from,
				dealer: dealer.name,
				day: await businessDay(db, now),
				items,
				note: s.note
			}),
			// The dealer's own view of what has reached it: the shipped modules of its fleet.
			about: `/fleet?${fleetSearch({ state: 'shipped' })}`
		});
	} catch (e) {
		result.mail.error = `${s.reference} is dispatched, but the e-mail to ${to.join(', ')} could not be sent: ${(e as Error).message}`;
	}
	return result;
}
