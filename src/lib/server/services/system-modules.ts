/**
 * Placing modules in a system's slots and taking them out again before commissioning: which
 * module may go in (model, dealer, state), and the slot, module, timeline and audit together.
 */
import { and, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx, type TxHook } from '$lib/server/db';
import { modules, sites, systems, systemSlots } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { checkRule, ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	assertTransition,
	endOf,
	mayBeInstalled,
	stateAfterRemoval
} from '$lib/domain/module-lifecycle';
import { STATE_LABELS } from '$lib/module-states';
import { nextEmptySlot, type SlotRef } from '$lib/domain/system-slots';
import { recordAudit, recordEvent } from './audit';
import { findModule, serialFromScan } from './modules';
import { assertMayChangeSites, dealerName } from './sites';
import {
	findSystem,
	modelById,
	placedIn,
	type Conn,
	type ModelRow,
	type SiteRow,
	type SystemRow
} from './systems';

type ModuleRow = typeof modules.$inferSelect;

const where = (s: SlotRef) => `string ${s.stringNo}, position ${s.position}`;

const NEVER_PLACED: Partial<Record<ModuleRow['state'], string>> = {
	allocated: 'is not built yet (only its label is printed)',
	built: 'has no factory test result yet, so it cannot be installed',
	test_failed: 'failed its factory test: it must not be installed. Set it aside for the workshop'
};

/** Why a module cannot go into this site's system, in words; null when it can. */
async function whyNot(
	conn: Conn,
	mod: ModuleRow,
	model: ModelRow,
	system: SystemRow,
	site: SiteRow
): Promise<string | null> {
	const [slot] = await conn
		.select({
			systemId: systems.id,
			system: systems.name,
			site: sites.name,
			stringNo: systemSlots.stringNo,
			position: systemSlots.position
		})
		.from(systemSlots)
		.innerJoin(systems, eq(systems.id, systemSlots.systemId))
		.innerJoin(sites, eq(sites.id, systems.siteId))
		.where(eq(systemSlots.moduleId, mod.id));
	if (slot?.systemId === system.id)
		return `${mod.serial} is already in this system (${where(slot)}).`;
	if (slot)
		return `${mod.serial} is installed in ${slot.system} at ${slot.site} (${where(slot)}). Take it out there first.`;
	if (NEVER_PLACED[mod.state]) return `${mod.serial} ${NEVER_PLACED[mod.state]}.`;
	if (mod.modelId !== system.modelId) {
		const systemModel = await modelById(conn, system.modelId);
		return `${mod.serial} is a ${model.code}; this system is built from ${systemModel.code}.`;
	}
	if (!mayBeInstalled(mod.state))
		return `${mod.serial} is ${(STATE_LABELS[mod.state] ?? mod.state).toLowerCase()}: only modules in stock or at the dealer can be installed.`;
	const siteDealer = await dealerName(conn, site.dealerOrgId);
	if (mod.state === 'shipped') {
		if (mod.dealerOrgId === site.dealerOrgId) return null;
		const to = (await dealerName(conn, mod.dealerOrgId)) ?? 'a dealer';
		return site.dealerOrgId === null
			? `${mod.serial} was shipped to ${to}; this site is our own installation, so only modules in stock can go in.`
			: `${mod.serial} was shipped to ${to}, not to this site's dealer (${siteDealer}).`;
	}
	if (mod.state === 'in_stock') {
		return site.dealerOrgId === null
			? null
			: `${mod.serial} is still in stock at the workshop: ship it to ${siteDealer} before installing it here.`;
	}
	return null;
}

function assertOpen(system: SystemRow) {
	if (system.status === 'commissioned')
		throw new ConflictError(
			`${system.name} is commissioned: modules can no longer be added or taken out here.`
		);
}

/**
 * Places a scanned module in a slot of a system (the given slot, or the next empty one).
 * The module must be of the system's model, shipped to the site's dealer (or in stock for
 * our own installation), and not installed anywhere. On success the slot, the module's
 * state and system, its timeline and the audit log change together.
 */
export async function placeModule(
	db: Db,
	actor: Actor,
	systemId: number,
	slot: SlotRef | null,
	scanText: string,
	baseUrl?: string,
	now = new Date(),
	/** Run inside this use case's own write transaction (the sync endpoint records its operation so). */
	hook?: TxHook
) {
	assertMayChangeSites(actor);
	const { system, site } = await findSystem(db, actor, systemId);
	assertOpen(system);
	if (
		slot &&
		(slot.stringNo < 1 ||
			slot.stringNo > system.parallel ||
			slot.position < 1 ||
			slot.position > system.series)
	) {
		throw new InvalidInputError(
			`String ${slot.stringNo}, position ${slot.position} is outside this system (${system.parallel} string${system.parallel === 1 ? '' : 's'} of ${system.series}).`
		);
	}
	const mod = await findModule(db, actor, await serialFromScan(db, actor, scanText, baseUrl));
	const model = await modelById(db, mod.modelId);

	return writeTx(
		db,
		async (tx) => {
			// Checked inside the write transaction, so two phones scanning at once cannot both win.
			const [current] = await tx.select().from(systems).where(eq(systems.id, system.id));
			assertOpen(current);
			const [fresh] = await tx.select().from(modules).where(eq(modules.id, mod.id));
			const reason = await whyNot(tx, fresh, model, system, site);
			if (reason) throw new ConflictError(reason);
			const placed = await placedIn(tx, system.id);
			const target = slot ?? nextEmptySlot(system.series, system.parallel, placed);
			if (!target)
				throw new ConflictError(
					`Every slot of ${system.name} is filled (${placed.length} of ${system.series * system.parallel}).`
				);
			const occupant = placed.find(
				(p) => p.stringNo === target.stringNo && p.position === target.position
			);
			if (occupant)
				throw new ConflictError(
					`String ${target.stringNo}, position ${target.position} already holds ${occupant.serial}. Take it out first or choose an empty slot.`
				);

			await tx
				.update(modules)
				.set({ state: endOf('install'), systemId: system.id, updatedAt: now })
				.where(eq(modules.id, mod.id));
			await tx.insert(systemSlots).values({
				systemId: system.id,
				stringNo: target.stringNo,
				position: target.position,
				moduleId: mod.id
			});
			const summary = `Installed in ${system.name} at ${site.name}, string ${target.stringNo} position ${target.position}`;
			await recordEvent(tx, actor, {
				moduleId: mod.id,
				kind: 'installed',
				summary,
				detail: { systemId: system.id, siteId: site.id, ...target },
				at: now
			});
			await recordAudit(tx, actor, {
				action: 'module.install',
				entity: 'module',
				entityId: mod.serial,
				before: { state: fresh.state, systemId: null },
				after: { state: 'installed', systemId: system.id, ...target },
				at: now
			});
			return {
				serial: mod.serial,
				...target,
				filled: placed.length + 1,
				total: system.series * system.parallel
			};
		},
		hook
	);
}

/**
 * Takes a module out of a system before commissioning: the slot is freed and the module
 * goes back to the dealer's stock (or ours, for our own installation), with an event saying so.
 */
export async function removeModule(
	db: Db,
	actor: Actor,
	systemId: number,
	serialText: string,
	now = new Date()
) {
	assertMayChangeSites(actor);
	const { system, site } = await findSystem(db, actor, systemId);
	assertOpen(system);
	const mod = await findModule(db, actor, serialText);
	return writeTx(db, async (tx) => {
		const [current] = await tx.select().from(systems).where(eq(systems.id, system.id));
		assertOpen(current);
		const [slot] = await tx
			.select()
			.from(systemSlots)
			.where(and(eq(systemSlots.systemId, system.id), eq(systemSlots.moduleId, mod.id)));
		if (!slot) throw new NotFoundError(`${mod.serial} is not in ${system.name}.`);
		checkRule(() => assertTransition(mod.state, 'uninstall', stateAfterRemoval(mod.dealerOrgId)));
		const state = stateAfterRemoval(mod.dealerOrgId);
		await tx
			.delete(systemSlots)
			.where(and(eq(systemSlots.systemId, system.id), eq(systemSlots.moduleId, mod.id)));
		await tx
			.update(modules)
			.set({ state, systemId: null, updatedAt: now })
			.where(eq(modules.id, mod.id));
		const back =
			state === 'shipped'
				? `back in ${(await dealerName(tx, mod.dealerOrgId)) ?? 'the dealer'}'s stock`
				: 'back in our stock';
		// The timeline has no "removed" kind; the installed kind with removed: true keeps the pair together.
		await recordEvent(tx, actor, {
			moduleId: mod.id,
			kind: 'installed',
			summary: `Taken out of ${system.name} at ${site.name} (${where(slot)}) before commissioning; ${back}`,
			detail: {
				removed: true,
				systemId: system.id,
				siteId: site.id,
				stringNo: slot.stringNo,
				position: slot.position
			},
			at: now
		});
		await recordAudit(tx, actor, {
			action: 'module.uninstall',
			entity: 'module',
			entityId: mod.serial,
			before: {
				state: mod.state,
				systemId: system.id,
				stringNo: slot.stringNo,
				position: slot.position
			},
			after: { state, systemId: null },
			at: now
		});
		return { serial: mod.serial, stringNo: slot.stringNo, position: slot.position, state };
	});
}
