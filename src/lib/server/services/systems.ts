import { and, asc, eq, isNull } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { moduleModels, modules, sites, systems, systemSlots } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { checkRule, ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	assertTransition,
	endOf,
	mayBeInstalled,
	stateAfterRemoval
} from '$lib/domain/module-lifecycle';
import { checkDesign, type DesignCheckResult, type DesignModule } from '$lib/domain/design-check';
import { toInverterWindow, type DesignCheckRequest, type SystemInput } from '$lib/schemas/site';
import { STATE_LABELS } from '$lib/module-states';
import { nextEmptySlot, type SlotRef } from '$lib/domain/system-slots';
import { recordAudit, recordEvent } from './audit';
import { findModule, serialFromScan } from './modules';
import { assertMayChangeSites, dealerName, findSite } from './sites';

type Conn = Db | Tx;
type ModelRow = typeof moduleModels.$inferSelect;
type ModuleRow = typeof modules.$inferSelect;
export type SystemRow = typeof systems.$inferSelect;
export type SiteRow = typeof sites.$inferSelect;
export type { SlotRef };
export { nextEmptySlot };

const NO_SYSTEM = (id: unknown) => `System ${String(id).slice(0, 12)} is not in the register.`;
const where = (s: SlotRef) => `string ${s.stringNo}, position ${s.position}`;

/** The figures the design check needs, from a stored model. */
export function designModuleOf(m: ModelRow): DesignModule {
	const {
		cellsSeries,
		cellMinV,
		cellNominalV,
		cellMaxV,
		ratedAh,
		usableWh,
		maxContinuousC,
		burstC,
		internalResistanceMohm
	} = m;
	return {
		cellsSeries,
		cellMinV,
		cellNominalV,
		cellMaxV,
		ratedAh,
		usableWh,
		maxContinuousC,
		burstC,
		...(internalResistanceMohm ? { internalResistanceMOhm: internalResistanceMohm } : {})
	};
}

/** A system and its site as the actor may see them; another dealer's system answers exactly like a missing one. */
export async function findSystem(
	conn: Conn,
	actor: Actor,
	id: number
): Promise<{ system: SystemRow; site: SiteRow }> {
	if (!Number.isSafeInteger(id) || id < 1) throw new NotFoundError(NO_SYSTEM(id));
	const scope = dealerScopeOf(actor);
	const [row] = await conn
		.select({ system: systems, site: sites })
		.from(systems)
		.innerJoin(sites, eq(sites.id, systems.siteId))
		.where(and(eq(systems.id, id), scope === null ? undefined : eq(sites.dealerOrgId, scope)));
	if (!row) throw new NotFoundError(NO_SYSTEM(id));
	return row;
}

async function modelById(conn: Conn, id: number): Promise<ModelRow> {
	const [m] = await conn.select().from(moduleModels).where(eq(moduleModels.id, id));
	return m;
}

/** What the new-system form needs: the site (scoped) and the models in production to build from. */
export async function systemFormOptions(db: Db, actor: Actor, siteId: number) {
	const site = await findSite(db, actor, siteId);
	const rows = await db
		.select()
		.from(moduleModels)
		.where(isNull(moduleModels.retiredAt))
		.orderBy(asc(moduleModels.code));
	// The figures go with each model so the form's design check runs in the browser.
	const models = rows.map((m) => ({ code: m.code, name: m.name, module: designModuleOf(m) }));
	return { site: { id: site.id, name: site.name }, models };
}

/**
 * The design check behind `POST /api/design-check`: with `model` the figures come from the
 * register and every model in production is offered as a variant for suggestions.
 */
export async function designCheck(db: Db, req: DesignCheckRequest): Promise<DesignCheckResult> {
	let module = req.module;
	let variants: { code: string; module: DesignModule }[] = [];
	if (req.model !== undefined) {
		const all = await db.select().from(moduleModels).orderBy(asc(moduleModels.code));
		const model = all.find((m) => m.code === req.model);
		if (!model)
			throw new NotFoundError(
				`There is no module model ${req.model}. Models in the register: ${all.map((m) => m.code).join(', ') || 'none yet'}.`
			);
		module = designModuleOf(model);
		variants = all
			.filter((m) => !m.retiredAt)
			.map((m) => ({ code: m.code, module: designModuleOf(m) }));
	}
	return checkDesign({
		module: module!,
		series: req.series,
		parallel: req.parallel,
		inverter: req.inverter,
		targetEnergyKWh: req.targetEnergyKWh,
		variants,
		protection: req.protection
	});
}

/**
 * Records a system on a site after checking its design against the inverter. A string whose
 * voltage range leaves the inverter's DC window is refused with the problems in words; one
 * that only leaves the preferred range (or draws other cautions) is stored and the cautions
 * come back as `warnings`.
 */
export async function createSystem(
	db: Db,
	actor: Actor,
	siteId: number,
	input: SystemInput,
	now = new Date()
): Promise<{ id: number; warnings: string[] }> {
	assertMayChangeSites(actor);
	const site = await findSite(db, actor, siteId);
	const [model] = await db
		.select()
		.from(moduleModels)
		.where(eq(moduleModels.code, input.modelCode));
	if (!model) {
		const message = `There is no module model ${input.modelCode}; choose one from the list.`;
		throw new InvalidInputError(message, [{ path: 'modelCode', message }]);
	}
	const result = checkDesign({
		module: designModuleOf(model),
		series: input.series,
		parallel: input.parallel,
		inverter: toInverterWindow(input)
	});
	if (!result.fitsWindow) {
		throw new InvalidInputError(
			`${input.series} × ${model.code} per string does not fit the inverter's DC window, so the system was not saved.`,
			result.problems.map((message) => ({ path: 'design', message }))
		);
	}
	const { modelCode: _code, ...fields } = input;
	return writeTx(db, async (tx) => {
		const [row] = await tx
			.insert(systems)
			.values({ ...fields, siteId: site.id, modelId: model.id, createdAt: now })
			.returning({ id: systems.id });
		await recordAudit(tx, actor, {
			action: 'system.create',
			entity: 'system',
			entityId: row.id,
			after: {
				...input,
				siteId: site.id,
				stringVoltage: result.stringVoltage,
				warnings: result.problems
			},
			at: now
		});
		return { id: row.id, warnings: result.problems };
	});
}

async function placedIn(conn: Conn, systemId: number) {
	return conn
		.select({
			stringNo: systemSlots.stringNo,
			position: systemSlots.position,
			moduleId: modules.id,
			serial: modules.serial,
			state: modules.state
		})
		.from(systemSlots)
		.innerJoin(modules, eq(modules.id, systemSlots.moduleId))
		.where(eq(systemSlots.systemId, systemId));
}

/** A system with its site, model, design figures and slot grid (strings as rows, positions in order). */
export async function getSystem(db: Db, actor: Actor, id: number) {
	const { system, site } = await findSystem(db, actor, id);
	const model = await modelById(db, system.modelId);
	const placed = await placedIn(db, system.id);
	const strings = Array.from({ length: system.parallel }, (_, s) => ({
		stringNo: s + 1,
		slots: Array.from({ length: system.series }, (_, p) => {
			const m = placed.find((x) => x.stringNo === s + 1 && x.position === p + 1);
			return {
				stringNo: s + 1,
				position: p + 1,
				serial: m?.serial ?? null,
				state: m?.state ?? null
			};
		})
	}));
	const total = system.series * system.parallel;
	const commissioned = system.status === 'commissioned';
	return {
		system,
		site: {
			id: site.id,
			name: site.name,
			dealerOrgId: site.dealerOrgId,
			dealerName: await dealerName(db, site.dealerOrgId)
		},
		model: { id: model.id, code: model.code, name: model.name },
		design: checkDesign({
			module: designModuleOf(model),
			series: system.series,
			parallel: system.parallel,
			inverter: toInverterWindow(system)
		}),
		strings,
		filled: placed.length,
		total,
		next: nextEmptySlot(system.series, system.parallel, placed),
		/** Modules may still be placed and removed. */
		open: !commissioned,
		/** Every slot is filled and the system is not commissioned yet: the checklist may start. */
		readyToCommission: !commissioned && placed.length === total
	};
}

/** The design check of a stored system, as the system page shows it. */
export async function designCheckForSystem(
	db: Db,
	actor: Actor,
	id: number
): Promise<DesignCheckResult> {
	const { system } = await findSystem(db, actor, id);
	return checkDesign({
		module: designModuleOf(await modelById(db, system.modelId)),
		series: system.series,
		parallel: system.parallel,
		inverter: toInverterWindow(system)
	});
}

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
	now = new Date()
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

	return writeTx(db, async (tx) => {
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
	});
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
