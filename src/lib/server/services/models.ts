import { and, asc, count, eq, isNull, ne, sql } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { allocations, modelPassportItems, moduleModels, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import type { ModelInput } from '$lib/schemas/model';
import { recordAudit } from './audit';

type Conn = Db | Tx;
export type ModuleModel = typeof moduleModels.$inferSelect;

const ENTITY = 'module_model';

/** Fields printed into serials and labels, or fixing the module's build: frozen once modules exist. */
const LOCKED_WHEN_IN_USE = {
	code: 'Code cannot change: modules already carry it on their labels and records.',
	variant: 'Variant cannot change: it is printed in the serials of modules already allocated.',
	cellsSeries:
		'Cells in series cannot change: modules already built with this model have that many cells.'
} as const satisfies Partial<Record<keyof ModelInput, string>>;

const WARRANTY_FIELDS = [
	'warrantyYears',
	'ratedCycles',
	'referenceTempC',
	'endRetentionPct',
	'hotTempC',
	'hotRatedCycles'
] as const;

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

async function moduleCount(conn: Conn, modelId: number): Promise<number> {
	const [row] = await conn.select({ n: count() }).from(modules).where(eq(modules.modelId, modelId));
	return row?.n ?? 0;
}

async function load(conn: Conn, id: number): Promise<ModuleModel> {
	const [model] = await conn.select().from(moduleModels).where(eq(moduleModels.id, id));
	if (!model) throw new NotFoundError(`There is no module model number ${id}.`);
	return model;
}

/** Refuses a code or GTIN another model has, or a variant another active model has. */
async function assertUnique(
	conn: Conn,
	input: Pick<ModelInput, 'code' | 'gtin' | 'variant'>,
	selfId: number | null,
	active: boolean
) {
	const notSelf = selfId === null ? undefined : ne(moduleModels.id, selfId);
	const [sameCode] = await conn
		.select({ id: moduleModels.id })
		.from(moduleModels)
		.where(and(eq(moduleModels.code, input.code), notSelf));
	if (sameCode)
		throw new ConflictError(
			`Another model already has the code ${input.code}. Choose a different code.`
		);
	if (input.gtin) {
		const [sameGtin] = await conn
			.select({ code: moduleModels.code })
			.from(moduleModels)
			.where(and(eq(moduleModels.gtin, input.gtin), notSelf));
		if (sameGtin)
			throw new ConflictError(
				`GTIN ${input.gtin} is already assigned to ${sameGtin.code}; each model needs its own GTIN.`
			);
	}
	if (active) {
		const [sameVariant] = await conn
			.select({ code: moduleModels.code })
			.from(moduleModels)
			.where(and(eq(moduleModels.variant, input.variant), isNull(moduleModels.retiredAt), notSelf));
		if (sameVariant)
			throw new ConflictError(
				`Variant ${input.variant} is already used by ${sameVariant.code}. Serials carry the variant, so two active models cannot share it: retire ${sameVariant.code} first or choose another variant.`
			);
	}
}

/** Models with the number of modules registered against each; active first, then by code. */
export async function listModels(db: Db, opts: { includeRetired?: boolean } = {}) {
	return db
		.select({ model: moduleModels, moduleCount: sql<number>`count(${modules.id})`.mapWith(Number) })
		.from(moduleModels)
		.leftJoin(modules, eq(modules.modelId, moduleModels.id))
		.where(opts.includeRetired ? undefined : isNull(moduleModels.retiredAt))
		.groupBy(moduleModels.id)
		.orderBy(sql`${moduleModels.retiredAt} is not null`, asc(moduleModels.code))
		.then((rows) => rows.map((r) => ({ ...r.model, moduleCount: r.moduleCount })));
}

/** One model and how many modules use it. Throws NotFoundError. */
export async function getModel(db: Db, id: number): Promise<ModuleModel & { moduleCount: number }> {
	const model = await load(db, id);
	return { ...model, moduleCount: await moduleCount(db, id) };
}

/**
 * Adds a model. Throws ConflictError when the code or GTIN is taken, or when an active
 * model already uses the variant (serials carry the variant, not the model).
 * @returns the new model's id
 */
export async function createModel(
	db: Db,
	actor: Actor,
	input: ModelInput,
	now = new Date()
): Promise<number> {
	return writeTx(db, async (tx) => {
		await assertUnique(tx, input, null, true);
		const [row] = await tx.insert(moduleModels).values(input).returning();
		await recordAudit(tx, actor, {
			action: 'model.create',
			entity: ENTITY,
			entityId: row.id,
			after: row,
			at: now
		});
		return row.id;
	});
}

/**
 * Changes a model. Once modules use it, code, variant and cells in series are locked
 * (InvalidInputError naming each field); everything else may change. Warranty terms are
 * copied onto each module at commissioning, so new terms apply to future commissionings only.
 */
export async function updateModel(
	db: Db,
	actor: Actor,
	id: number,
	input: ModelInput,
	now = new Date()
): Promise<{ warrantyTermsChanged: boolean }> {
	return writeTx(db, async (tx) => {
		const before = await load(tx, id);
		const inUse = await moduleCount(tx, id);
		if (inUse > 0) {
			const locked = (
				Object.keys(LOCKED_WHEN_IN_USE) as (keyof typeof LOCKED_WHEN_IN_USE)[]
			).filter((k) => input[k] !== before[k]);
			if (locked.length)
				throw new InvalidInputError(
					`${before.code} is used by ${plural(inUse, 'module')}, so its code, variant and cells in series are fixed. Create a new model for a different design.`,
					locked.map((k) => ({ path: k, message: LOCKED_WHEN_IN_USE[k] }))
				);
		}
		await assertUnique(tx, input, id, before.retiredAt === null);
		const [after] = await tx
			.update(moduleModels)
			.set(input)
			.where(eq(moduleModels.id, id))
			.returning();
		await recordAudit(tx, actor, {
			action: 'model.update',
			entity: ENTITY,
			entityId: id,
			before,
			after,
			at: now
		});
		return { warrantyTermsChanged: WARRANTY_FIELDS.some((k) => before[k] !== after[k]) };
	});
}

/** Retires a model: its modules stay on record, but no new serials can be allocated for it. */
export async function retireModel(
	db: Db,
	actor: Actor,
	id: number,
	now = new Date()
): Promise<void> {
	await writeTx(db, async (tx) => {
		const before = await load(tx, id);
		if (before.retiredAt) throw new ConflictError(`${before.code} is already retired.`);
		const [after] = await tx
			.update(moduleModels)
			.set({ retiredAt: now })
			.where(eq(moduleModels.id, id))
			.returning();
		await recordAudit(tx, actor, {
			action: 'model.retire',
			entity: ENTITY,
			entityId: id,
			before,
			after,
			at: now
		});
	});
}

/** Puts a retired model back in use, unless another active model has taken its variant meanwhile. */
export async function reinstateModel(
	db: Db,
	actor: Actor,
	id: number,
	now = new Date()
): Promise<void> {
	await writeTx(db, async (tx) => {
		const before = await load(tx, id);
		if (!before.retiredAt) throw new ConflictError(`${before.code} is not retired.`);
		await assertUnique(tx, before, id, true);
		const [after] = await tx
			.update(moduleModels)
			.set({ retiredAt: null })
			.where(eq(moduleModels.id, id))
			.returning();
		await recordAudit(tx, actor, {
			action: 'model.reinstate',
			entity: ENTITY,
			entityId: id,
			before,
			after,
			at: now
		});
	});
}

/** Deletes a model nobody has used yet (a typo, a draft). Otherwise ConflictError: retire it. */
export async function deleteModel(
	db: Db,
	actor: Actor,
	id: number,
	now = new Date()
): Promise<void> {
	await writeTx(db, async (tx) => {
		const before = await load(tx, id);
		const inUse = await moduleCount(tx, id);
		if (inUse > 0)
			throw new ConflictError(
				`${before.code} is in use by ${plural(inUse, 'module')} — retire it instead.`
			);
		const [alloc] = await tx
			.select({ n: count() })
			.from(allocations)
			.where(eq(allocations.modelId, id));
		if (alloc && alloc.n > 0)
			throw new ConflictError(
				`${before.code} has ${plural(alloc.n, 'serial allocation')} on record — retire it instead.`
			);
		// Passport items belong to the model alone; they go with it (the audit keeps the model).
		await tx.delete(modelPassportItems).where(eq(modelPassportItems.modelId, id));
		await tx.delete(moduleModels).where(eq(moduleModels.id, id));
		await recordAudit(tx, actor, {
			action: 'model.delete',
			entity: ENTITY,
			entityId: id,
			before,
			at: now
		});
	});
}
