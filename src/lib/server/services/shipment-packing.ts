/** Packing a draft shipment: one scan, a run of serials, or taking a module off again. */
import { and, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { modules, shipmentItems } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { parseSerial, serialRun } from '$lib/domain/serial';
import { MAX_RANGE } from '$lib/schemas/shipment';
import { recordAudit } from './audit';
import { serialFromScan } from './modules';
import {
	assertDraft,
	assertStaff,
	candidates,
	itemCount,
	loadShipment,
	plural,
	refusal,
	type Candidate
} from './shipment-rules';

export type ScanOutcome = {
	outcome: 'added' | 'already';
	serial: string;
	message: string;
	count: number;
};

/**
 * Adds the module of one scan (bare serial, /m/ URL or GS1 Digital Link) to a draft.
 * Only a passed module in stock that is on no other draft can be added; otherwise a
 * ConflictError says why, naming the module's state. The same serial twice changes nothing.
 */
export async function addToShipment(
	db: Db,
	actor: Actor,
	shipmentId: number,
	scanText: string,
	baseUrl?: string,
	now = new Date()
): Promise<ScanOutcome> {
	assertStaff(actor);
	const serial = await serialFromScan(db, actor, scanText, baseUrl);
	return writeTx(db, async (tx) => {
		const s = await loadShipment(tx, shipmentId);
		await assertDraft(tx, s);
		const c = (await candidates(tx, s.id, [serial])).get(serial)!;
		if (c.onThis) {
			const n = await itemCount(tx, s.id);
			return {
				outcome: 'already',
				serial,
				count: n,
				message: `${serial} is already on ${s.reference}; nothing changed (${plural(n, 'module')} on it).`
			};
		}
		const reason = refusal(c);
		if (reason) throw new ConflictError(`${reason}.`);
		await tx.insert(shipmentItems).values({ shipmentId: s.id, moduleId: c.id, addedAt: now });
		await recordAudit(tx, actor, {
			action: 'shipment.add',
			entity: 'shipment',
			entityId: s.reference,
			after: { serials: [serial] },
			at: now
		});
		const n = await itemCount(tx, s.id);
		return {
			outcome: 'added',
			serial,
			count: n,
			message: `${serial} (${c.modelCode}) added to ${s.reference}: ${plural(n, 'module')} on it.`
		};
	});
}

/**
 * Adds a run of consecutive serials (same variant and year, at most MAX_RANGE) to a draft.
 * Each module that cannot ship is left out with its reason; the others are added.
 */
export async function addRangeToShipment(
	db: Db,
	actor: Actor,
	shipmentId: number,
	firstSerial: string,
	lastSerial: string,
	now = new Date()
) {
	assertStaff(actor);
	const a = parseSerial(firstSerial);
	const b = parseSerial(lastSerial);
	if (!a.ok)
		throw new InvalidInputError(`The first serial “${firstSerial.slice(0, 40)}” is ${a.reason}.`, [
			{ path: 'first', message: a.reason }
		]);
	if (!b.ok)
		throw new InvalidInputError(`The last serial “${lastSerial.slice(0, 40)}” is ${b.reason}.`, [
			{ path: 'last', message: b.reason }
		]);
	if (a.variant !== b.variant || a.year2 !== b.year2)
		throw new InvalidInputError(
			`A range stays within one variant and year: ${a.serial} and ${b.serial} differ. Enter them as two ranges.`,
			[{ path: 'last', message: 'Same variant and year as the first serial.' }]
		);
	const [lo, hi] = a.number <= b.number ? [a.number, b.number] : [b.number, a.number];
	const size = hi - lo + 1;
	if (size > MAX_RANGE)
		throw new InvalidInputError(
			`${a.serial} to ${b.serial} spans ${size} serials; add at most ${MAX_RANGE} at a time.`,
			[{ path: 'last', message: `At most ${MAX_RANGE} modules per range.` }]
		);
	const serials = serialRun(a.variant, 2000 + a.year2, lo, size);

	return writeTx(db, async (tx) => {
		const s = await loadShipment(tx, shipmentId);
		await assertDraft(tx, s);
		const found = await candidates(tx, s.id, serials);
		const added: Candidate[] = [];
		const already: string[] = [];
		const refused: { serial: string; reason: string }[] = [];
		for (const serial of serials) {
			const c = found.get(serial);
			const reason = !c ? `${serial} is not in the register` : c.onThis ? null : refusal(c);
			if (c?.onThis) already.push(serial);
			else if (reason) refused.push({ serial, reason });
			else added.push(c!);
		}
		for (let i = 0; i < added.length; i += 200)
			await tx
				.insert(shipmentItems)
				.values(
					added.slice(i, i + 200).map((c) => ({ shipmentId: s.id, moduleId: c.id, addedAt: now }))
				);
		if (added.length)
			await recordAudit(tx, actor, {
				action: 'shipment.add',
				entity: 'shipment',
				entityId: s.reference,
				after: { serials: added.map((c) => c.serial) },
				at: now
			});
		return {
			reference: s.reference,
			added: added.map((c) => c.serial),
			already,
			refused,
			count: await itemCount(tx, s.id)
		};
	});
}

/** Takes one module off a draft. */
export async function removeFromShipment(
	db: Db,
	actor: Actor,
	shipmentId: number,
	serialText: string,
	now = new Date()
) {
	assertStaff(actor);
	const parsed = parseSerial(serialText);
	if (!parsed.ok)
		throw new InvalidInputError(
			`“${serialText.slice(0, 40)}” is not a module serial: ${parsed.reason}.`
		);
	return writeTx(db, async (tx) => {
		const s = await loadShipment(tx, shipmentId);
		await assertDraft(tx, s);
		const [mod] = await tx
			.select({ id: modules.id })
			.from(modules)
			.where(eq(modules.serial, parsed.serial));
		const gone = mod
			? await tx
					.delete(shipmentItems)
					.where(and(eq(shipmentItems.shipmentId, s.id), eq(shipmentItems.moduleId, mod.id)))
					.returning({ id: shipmentItems.moduleId })
			: [];
		if (!gone.length) throw new NotFoundError(`${parsed.serial} is not on ${s.reference}.`);
		await recordAudit(tx, actor, {
			action: 'shipment.remove',
			entity: 'shipment',
			entityId: s.reference,
			before: { serials: [parsed.serial] },
			at: now
		});
		return { serial: parsed.serial, count: await itemCount(tx, s.id) };
	});
}
