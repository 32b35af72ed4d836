import { and, count, desc, eq, gte, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { moduleCellLots, moduleModels, modules, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError } from '$lib/server/errors';
import type { BuildInput } from '$lib/schemas/build';
import { recordAudit, recordEvent } from './audit';
import { findModule } from './modules';
import { businessDay } from './calendar';
import { endOf, mayMove, statesFrom } from '$lib/domain/module-lifecycle';

/**
 * Registers a module's build: cell lots (indexed for traceability), the confirmed
 * assembly checks, who and when. Only a module whose label is printed and not yet built,
 * of a model still in production, can be registered; nothing changes otherwise.
 */
export async function registerBuild(
	db: Db,
	actor: Actor,
	serialText: string,
	input: BuildInput,
	now = new Date()
) {
	const mod = await findModule(db, actor, serialText);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, mod.modelId));
	if (!mayMove(mod.state, 'build')) {
		const [by] = mod.builtBy
			? await db.select({ name: users.name }).from(users).where(eq(users.id, mod.builtBy))
			: [];
		const when = mod.builtAt
			? ` on ${mod.builtAt.toISOString().slice(0, 16).replace('T', ' ')} UTC`
			: '';
		throw new ConflictError(
			`${mod.serial} is already built${when}${by ? ` by ${by.name}` : ''}. Scan the next label.`
		);
	}
	if (model.retiredAt)
		throw new ConflictError(
			`${mod.serial} is a ${model.code}, which is retired. Ask an administrator before building it.`
		);

	const checks = Object.fromEntries(input.checks.map((k) => [k, true]));
	return writeTx(db, async (tx) => {
		const updated = await tx
			.update(modules)
			.set({
				state: endOf('build'),
				builtAt: now,
				builtBy: actor.userId,
				cellLots: JSON.stringify(input.cellLots),
				buildChecks: JSON.stringify(checks),
				buildNotes: input.notes || null,
				updatedAt: now
			})
			.where(and(eq(modules.id, mod.id), inArray(modules.state, statesFrom('build'))))
			.returning({ state: modules.state });
		// A second bench scanning the same label at the same moment loses here, with the same message.
		if (!updated.length) throw new ConflictError(`${mod.serial} is already built.`);
		await tx
			.insert(moduleCellLots)
			.values(input.cellLots.map((lotCode) => ({ moduleId: mod.id, lotCode })));
		await recordEvent(tx, actor, {
			moduleId: mod.id,
			kind: 'built',
			summary: `Built with cell lot${input.cellLots.length > 1 ? 's' : ''} ${input.cellLots.join(', ')}`,
			detail: { cellLots: input.cellLots, checks, notes: input.notes },
			at: now
		});
		await recordAudit(tx, actor, {
			action: 'module.build',
			entity: 'module',
			entityId: mod.serial,
			before: { state: mod.state },
			after: { state: 'built', cellLots: input.cellLots, checks },
			at: now
		});
		return { serial: mod.serial, state: 'built' as const };
	});
}

/** What the bench needs after a scan: the module to build, or why it cannot be built. */
export async function benchTarget(db: Db, actor: Actor, serial: string) {
	const mod = await findModule(db, actor, serial);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, mod.modelId));
	if (!mayMove(mod.state, 'build')) {
		const [by] = mod.builtBy
			? await db.select({ name: users.name }).from(users).where(eq(users.id, mod.builtBy))
			: [];
		throw new ConflictError(
			`${mod.serial} is already built${mod.builtAt ? ` (${await businessDay(db, mod.builtAt)}${by ? `, ${by.name}` : ''})` : ''}. Scan the next label.`
		);
	}
	if (model.retiredAt)
		throw new ConflictError(
			`${mod.serial} is a ${model.code}, which is retired. Ask an administrator before building it.`
		);
	return {
		serial: mod.serial,
		modelCode: model.code,
		modelName: model.name,
		cellsSeries: model.cellsSeries
	};
}

/** The actor's latest builds, newest first, for the bench's running list. */
export async function recentBuilds(db: Db, actor: Actor, limit = 8) {
	return db
		.select({ serial: modules.serial, builtAt: modules.builtAt, modelCode: moduleModels.code })
		.from(modules)
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.where(eq(modules.builtBy, actor.userId ?? -1))
		.orderBy(desc(modules.builtAt))
		.limit(limit);
}

/** How far back the bench's "this shift" count reaches: one 8-hour shift (common practice). */
export const SHIFT_HOURS = 8;

/** How many modules the actor has built in the last `SHIFT_HOURS` hours up to `now`. */
export async function shiftBuildCount(db: Db, actor: Actor, now = new Date()): Promise<number> {
	const since = new Date(now.getTime() - SHIFT_HOURS * 3_600_000);
	const [row] = await db
		.select({ n: count() })
		.from(modules)
		.where(and(eq(modules.builtBy, actor.userId ?? -1), gte(modules.builtAt, since)));
	return row?.n ?? 0;
}
