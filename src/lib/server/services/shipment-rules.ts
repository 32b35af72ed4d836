/**
 * What every shipment use case shares: who may touch shipments, the draft rule, and why a
 * module may not go on one (in words naming its state). The use cases are in shipments.ts
 * (drafts and lists), shipment-packing.ts (scan, range, remove) and shipment-dispatch.ts.
 */
import { asc, count, desc, eq, inArray } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import {
	moduleModels,
	modules,
	organisations,
	shipmentItems,
	shipments,
	type ModuleState
} from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { ConflictError, ForbiddenError, NotFoundError } from '$lib/server/errors';
import { deriveFigures } from '$lib/domain/model';
import { calendarDay } from '$lib/domain/calendar';
import { assemblerCalendar, businessDay } from './calendar';

export type Conn = Db | Tx;
export type Shipment = typeof shipments.$inferSelect;

/** The day of an instant on the assembler's calendar, for a refusal message. */
async function dayOf(conn: Conn, d: Date | null): Promise<string> {
	return d ? businessDay(conn, d) : 'an earlier date';
}
export const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** Shipments are the assembler's business: a dealer's people never reach them. */
export function assertStaff(actor: Actor) {
	if (dealerScopeOf(actor) !== null)
		throw new ForbiddenError('Shipments are prepared by the assembler’s workshop.');
}

export async function loadShipment(conn: Conn, id: number): Promise<Shipment> {
	const [s] = await conn.select().from(shipments).where(eq(shipments.id, id));
	if (!s) throw new NotFoundError(`There is no shipment ${id}.`);
	return s;
}

/** Once a shipment has left, its record is history: returns are recorded on each module. */
export async function assertDraft(conn: Conn, s: Shipment): Promise<void> {
	if (s.status !== 'draft')
		throw new ConflictError(
			`${s.reference} was dispatched on ${await dayOf(conn, s.dispatchedAt)}; a return is recorded on the module instead.`
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

export interface Candidate {
	id: number;
	serial: string;
	state: ModuleState;
	modelCode: string;
	shippedAt: Date | null;
	dealerName: string | null;
	onThis: boolean;
	otherDraft: string | null;
	shippedOn: string | null;
	/** The day it was shipped, on the assembler's calendar. */
	shippedDay: string | null;
}

/** Why a module cannot go on a shipment, in words with its current state; null when it can. */
export function refusal(c: Candidate): string | null {
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
			return `${c.serial} was shipped to ${c.dealerName ?? 'a dealer'} on ${c.shippedDay ?? 'an earlier date'}${c.shippedOn ? ` (${c.shippedOn})` : ''}`;
		default:
			return `${c.serial} ${AFTER_SHIPPING[c.state] ?? `is ${c.state}`}${c.dealerName ? ` (${c.dealerName})` : ''}; ${ONLY_PASSED}`;
	}
}

/** The modules behind these serials, with what the add rules need: state, dealer, other shipments. */
export async function candidates(
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
	const { timeZone } = await assemblerCalendar(conn);
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
					shippedOn: mine.find((l) => l.status === 'dispatched')?.reference ?? null,
					shippedDay: r.shippedAt ? calendarDay(r.shippedAt, timeZone) : null
				}
			];
		})
	);
}

export async function itemCount(conn: Conn, shipmentId: number): Promise<number> {
	const [row] = await conn
		.select({ n: count() })
		.from(shipmentItems)
		.where(eq(shipmentItems.shipmentId, shipmentId));
	return row?.n ?? 0;
}

/** The modules on a shipment with their model's rated data, in serial order. */
export async function itemsOf(conn: Conn, shipmentId: number) {
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
