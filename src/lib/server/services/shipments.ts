import { and, asc, count, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	moduleEvents,
	moduleModels,
	modules,
	organisations,
	shipmentItems,
	shipments,
	users,
	type ModuleState
} from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import {
	ConflictError,
	ForbiddenError,
	InvalidInputError,
	NotFoundError
} from '$lib/server/errors';
import { parseSerial, serialRun } from '$lib/domain/serial';
import { deriveFigures } from '$lib/domain/model';
import { MAX_RANGE } from '$lib/schemas/shipment';
import { sendMail } from '$lib/server/mail';
import { fleetSearch } from '$lib/schemas/fleet';
import { recordAudit } from './audit';
import { serialFromScan } from './modules';
import { businessDay, businessYear } from './calendar';
import { nextYearlyReference } from './sequences';
import { calendarDay } from '$lib/domain/calendar';
import { endOf, mayBeShipped, statesFrom } from '$lib/domain/module-lifecycle';

type Conn = Db | Tx;
type Shipment = typeof shipments.$inferSelect;

/** A date for a refusal message, on the given calendar (the assembler's where the caller knows it). */
const day = (d: Date | null, timeZone = 'UTC') =>
	d ? calendarDay(d, timeZone) : 'an earlier date';
const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** Shipments are the assembler's business: a dealer's people never reach them. */
function assertStaff(actor: Actor) {
	if (dealerScopeOf(actor) !== null)
		throw new ForbiddenError('Shipments are prepared by the assembler’s workshop.');
}

async function loadShipment(conn: Conn, id: number): Promise<Shipment> {
	const [s] = await conn.select().from(shipments).where(eq(shipments.id, id));
	if (!s) throw new NotFoundError(`There is no shipment ${id}.`);
	return s;
}

/** Once a shipment has left, its record is history: returns are recorded on each module. */
function assertDraft(s: Shipment) {
	if (s.status !== 'draft')
		throw new ConflictError(
			`${s.reference} was dispatched on ${day(s.dispatchedAt)}; a return is recorded on the module instead.`
		);
}

const ONLY_PASSED = 'only passed modules in stock can ship';
const AFTER_SHIPPING: Partial<Record<ModuleState, string>> = {
	installed: 'is installed at a site',
	commissioned: 'is in service',
	claim_open: 'is under a warranty claim',
	returned: 'was returned and has not been tested again',
	replaced: 'was replaced under warranty',
	scrapped: 'was scrapped'
};

interface Candidate {
	id: number;
	serial: string;
	state: ModuleState;
	modelCode: string;
	shippedAt: Date | null;
	dealerName: string | null;
	onThis: boolean;
	otherDraft: string | null;
	shippedOn: string | null;
}

/** Why a module cannot go on a shipment, in words with its current state; null when it can. */
function refusal(c: Candidate): string | null {
	switch (c.state) {
		case 'in_stock':
			return c.otherDraft ? `${c.serial} is already on draft ${c.otherDraft}` : null;
		case 'allocated':
			return `${c.serial} has a label but is not built yet; ${ONLY_PASSED}`;
		case 'built':
			return `${c.serial} is built but not tested yet; ${ONLY_PASSED}`;
		case 'test_failed':
			return `${c.serial} failed its factory test; ${ONLY_PASSED}`;
		case 'shipped':
			return `${c.serial} was shipped to ${c.dealerName ?? 'a dealer'} on ${day(c.shippedAt)}${c.shippedOn ? ` (${c.shippedOn})` : ''}`;
		default:
			return `${c.serial} ${AFTER_SHIPPING[c.state] ?? `is ${c.state}`}${c.dealerName ? ` (${c.dealerName})` : ''}; ${ONLY_PASSED}`;
	}
}

/** The modules behind these serials, with what the add rules need: state, dealer, other shipments. */
async function candidates(
	conn: Conn,
	shipmentId: number,
	serials: string[]
): Promise<Map<string, Candidate>> {
	const rows = await conn
		.select({
			id: modules.id,
			serial: modules.serial,
			state: modules.state,
			shippedAt: modules.shippedAt,
			modelCode: moduleModels.code,
			dealerName: organisations.name
		})
		.from(modules)
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.leftJoin(organisations, eq(modules.dealerOrgId, organisations.id))
		.where(inArray(modules.serial, serials));
	const links = rows.length
		? await conn
				.select({
					moduleId: shipmentItems.moduleId,
					shipmentId: shipments.id,
					reference: shipments.reference,
					status: shipments.status,
					dispatchedAt: shipments.dispatchedAt
				})
				.from(shipmentItems)
				.innerJoin(shipments, eq(shipmentItems.shipmentId, shipments.id))
				.where(
					inArray(
						shipmentItems.moduleId,
						rows.map((r) => r.id)
					)
				)
				.orderBy(desc(shipments.dispatchedAt))
		: [];
	return new Map(
		rows.map((r) => {
			const mine = links.filter((l) => l.moduleId === r.id);
			return [
				r.serial,
				{
					...r,
					onThis: mine.some((l) => l.shipmentId === shipmentId),
					otherDraft:
						mine.find((l) => l.status === 'draft' && l.shipmentId !== shipmentId)?.reference ??
						null,
					shippedOn: mine.find((l) => l.status === 'dispatched')?.reference ?? null
				}
			];
		})
	);
}

async function itemCount(conn: Conn, shipmentId: number): Promise<number> {
	const [row] = await conn
		.select({ n: count() })
		.from(shipmentItems)
		.where(eq(shipmentItems.shipmentId, shipmentId));
	return row?.n ?? 0;
}

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
		assertDraft(s);
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
		assertDraft(s);
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
		assertDraft(s);
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
		assertDraft(s);
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
		assertDraft(s);
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

/** The modules on a shipment with their model's rated data, in serial order. */
async function itemsOf(conn: Conn, shipmentId: number) {
	const rows = await conn
		.select({
			id: modules.id,
			serial: modules.serial,
			state: modules.state,
			addedAt: shipmentItems.addedAt,
			model: moduleModels
		})
		.from(shipmentItems)
		.innerJoin(modules, eq(shipmentItems.moduleId, modules.id))
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.where(eq(shipmentItems.shipmentId, shipmentId))
		.orderBy(asc(modules.serial));
	return rows.map(({ model, ...r }) => ({
		...r,
		modelCode: model.code,
		modelName: model.name,
		nominalV: deriveFigures(model).nominalV,
		ratedAh: model.ratedAh,
		usableWh: model.usableWh,
		massKg: model.massKg
	}));
}

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
		assertDraft(s);
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
	const width = Math.max(...items.map((i) => i.serial.length));
	try {
		await sendMail(db, {
			to,
			subject: `Shipment ${s.reference} from ${from}: ${plural(items.length, 'module')}`,
			text:
				`Hello ${dealer.name},\n\n${from} dispatched shipment ${s.reference} to you on ${await businessDay(db, now)} with ${plural(items.length, 'module')}:\n\n` +
				items.map((i) => `${i.serial.padEnd(width)}  ${i.modelCode}  ${i.modelName}`).join('\n') +
				(s.note ? `\n\nNote: ${s.note}` : '') +
				`\n\nPlease check each serial against this list when the shipment arrives and tell us at once if anything is missing or damaged.` +
				`\nA damaged battery module must not be installed; keep it apart and ask us how to return it under the dangerous-goods rules that apply.\n`,
			// The dealer's own view of what has reached it: the shipped modules of its fleet.
			about: `/fleet?${fleetSearch({ state: 'shipped' })}`
		});
	} catch (e) {
		result.mail.error = `${s.reference} is dispatched, but the e-mail to ${to.join(', ')} could not be sent: ${(e as Error).message}`;
	}
	return result;
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
