/**
 * Systems on a site: the form's options, the design check, recording a system and reading it
 * back with its slot grid. Placing and taking out modules is in system-modules.ts.
 */
import { and, asc, eq, isNull } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx, type TxHook } from '$lib/server/db';
import { moduleModels, modules, sites, systems, systemSlots } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	checkDesign,
	checkSystemDesign,
	designModuleOf,
	type DesignCheckResult,
	type DesignModule
} from '$lib/domain/design-check';
import type { DesignCheckRequest, SystemInput } from '$lib/schemas/site';
import { nextEmptySlot } from '$lib/domain/system-slots';
import { recordAudit } from './audit';
import { assertMayChangeSites, dealerName, findSite } from './sites';

export type Conn = Db | Tx;
export type ModelRow = typeof moduleModels.$inferSelect;
export type SystemRow = typeof systems.$inferSelect;
export type SiteRow = typeof sites.$inferSelect;

const NO_SYSTEM = (id: unknown) => `System ${String(id).slice(0, 12)} is not in the register.`;

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

export async function modelById(conn: Conn, id: number): Promise<ModelRow> {
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
	now = new Date(),
	/** Run inside this use case's own write transaction (the sync endpoint records its operation so). */
	hook?: TxHook
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
	const result = checkSystemDesign(model, input);
	if (!result.fitsWindow) {
		throw new InvalidInputError(
			`${input.series} × ${model.code} per string does not fit the inverter's DC window, so the system was not saved.`,
			result.problems.map((message) => ({ path: 'design', message }))
		);
	}
	const { modelCode: _code, ...fields } = input;
	return writeTx(
		db,
		async (tx) => {
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
		},
		hook
	);
}

export async function placedIn(conn: Conn, systemId: number) {
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
		design: checkSystemDesign(model, system),
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
