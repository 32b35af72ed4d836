import { and, count, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	allocations,
	moduleEvents,
	moduleModels,
	modules,
	serialCounters
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { serialRun } from '$lib/domain/serial';
import { recordAudit } from './audit';
import { businessYear } from './calendar';

export const MAX_ALLOCATION = 1000;
const MAX_RUNNING_NUMBER = 999_999;

/**
 * Reserves `count` new serials of a model in one contiguous run. The counter row per
 * (variant, year) is bumped by a single UPDATE inside a write transaction, so two people
 * allocating at once get adjacent runs: nothing reused, nothing skipped.
 * @returns the allocation with its first and last serial
 */
export async function allocateSerials(
	db: Db,
	actor: Actor,
	input: { modelId: number; count: number },
	now = new Date()
) {
	if (!Number.isInteger(input.count) || input.count < 1 || input.count > MAX_ALLOCATION)
		throw new InvalidInputError(`Allocate between 1 and ${MAX_ALLOCATION} serials at a time.`, [
			{ path: 'count', message: `Between 1 and ${MAX_ALLOCATION}.` }
		]);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, input.modelId));
	if (!model) throw new NotFoundError('That module model does not exist.');
	if (model.retiredAt)
		throw new ConflictError(`${model.code} is retired: no new serials can be allocated for it.`);
	// Serials carry the year on the assembler's calendar (a label printed on 1 January local time is that year's).
	const year = await businessYear(db, now);

	return writeTx(db, async (tx) => {
		const [counter] = await tx
			.insert(serialCounters)
			.values({ variant: model.variant, year, next: 1 + input.count })
			.onConflictDoUpdate({
				target: [serialCounters.variant, serialCounters.year],
				set: { next: sql`${serialCounters.next} + ${input.count}` }
			})
			.returning({ next: serialCounters.next });
		const first = counter.next - input.count;
		if (first + input.count - 1 > MAX_RUNNING_NUMBER)
			throw new ConflictError(
				`Only ${MAX_RUNNING_NUMBER - first + 1} serials are left for variant ${model.variant} in ${year}.`
			);
		const serials = serialRun(model.variant, year, first, input.count);
		const [alloc] = await tx
			.insert(allocations)
			.values({
				modelId: model.id,
				firstSerial: serials[0],
				lastSerial: serials.at(-1)!,
				count: input.count,
				createdBy: actor.userId!,
				createdAt: now
			})
			.returning();
		for (let i = 0; i < serials.length; i += 200) {
			const chunk = serials.slice(i, i + 200);
			const inserted = await tx
				.insert(modules)
				.values(
					chunk.map((serial) => ({
						serial,
						modelId: model.id,
						allocationId: alloc.id,
						createdAt: now,
						updatedAt: now
					}))
				)
				.returning({ id: modules.id });
			await tx.insert(moduleEvents).values(
				inserted.map((m) => ({
					moduleId: m.id,
					kind: 'allocated' as const,
					at: now,
					actorUserId: actor.userId,
					actorLabel: actor.label,
					summary: `Serial reserved (${model.code}, run ${serials[0]} – ${serials.at(-1)})`
				}))
			);
		}
		await recordAudit(tx, actor, {
			action: 'serials.allocate',
			entity: 'allocation',
			entityId: alloc.id,
			after: {
				model: model.code,
				first: alloc.firstSerial,
				last: alloc.lastSerial,
				count: input.count
			},
			at: now
		});
		return alloc;
	});
}

export async function listAllocations(db: Db, limit = 50) {
	const rows = await db
		.select({
			id: allocations.id,
			firstSerial: allocations.firstSerial,
			lastSerial: allocations.lastSerial,
			count: allocations.count,
			createdAt: allocations.createdAt,
			modelCode: moduleModels.code
		})
		.from(allocations)
		.innerJoin(moduleModels, eq(allocations.modelId, moduleModels.id))
		.orderBy(desc(allocations.id))
		.limit(limit);
	if (!rows.length) return [];
	const built = await db
		.select({ allocationId: modules.allocationId, n: count() })
		.from(modules)
		.where(
			and(
				inArray(
					modules.allocationId,
					rows.map((r) => r.id)
				),
				sql`${modules.state} <> 'allocated'`
			)
		)
		.groupBy(modules.allocationId);
	const builtBy = new Map(built.map((b) => [b.allocationId, b.n]));
	return rows.map((r) => ({ ...r, built: builtBy.get(r.id) ?? 0 }));
}

export async function getAllocation(db: Db, id: number) {
	const [row] = await db
		.select({ allocation: allocations, model: moduleModels })
		.from(allocations)
		.innerJoin(moduleModels, eq(allocations.modelId, moduleModels.id))
		.where(eq(allocations.id, id));
	if (!row) throw new NotFoundError(`Allocation ${id} does not exist.`);
	return row;
}
