import { and, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { modelPassportItems, moduleModels } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { InvalidInputError, NotFoundError } from '$lib/server/errors';
import { writeTx } from '$lib/server/db';
import {
	PASSPORT_ITEMS,
	parseItemInput,
	type ItemInput,
	type StoredItem
} from '$lib/domain/passport-items';
import { recordAudit } from './audit';

/** The passport items stored for a model, by item key. Unknown keys (from an older catalogue) are skipped. */
export async function getModelPassportItems(
	db: Db,
	modelId: number
): Promise<Record<string, StoredItem>> {
	const rows = await db
		.select()
		.from(modelPassportItems)
		.where(eq(modelPassportItems.modelId, modelId));
	const out: Record<string, StoredItem> = {};
	for (const r of rows) out[r.itemKey] = { value: JSON.parse(r.value), unit: r.unit };
	return out;
}

/**
 * Saves the admin's passport items of a model: every item is read from `inputs`; a valid
 * value replaces the stored one, an empty one removes it (back to "not yet provided").
 * Any invalid item refuses the whole save with one issue per item, so nothing is half written.
 */
export async function saveModelPassportItems(
	db: Db,
	actor: Actor,
	modelId: number,
	inputs: Record<string, ItemInput>,
	now = new Date()
) {
	const [model] = await db
		.select({ id: moduleModels.id, code: moduleModels.code })
		.from(moduleModels)
		.where(eq(moduleModels.id, modelId));
	if (!model) throw new NotFoundError('That model does not exist.');
	const issues: { path: string; message: string }[] = [];
	const parsed: { key: string; item: StoredItem | null }[] = [];
	for (const def of PASSPORT_ITEMS) {
		const r = parseItemInput(def, inputs[def.key] ?? {});
		if (r.ok) parsed.push({ key: def.key, item: r.item });
		else issues.push({ path: def.key, message: r.message });
	}
	if (issues.length)
		throw new InvalidInputError(
			`${issues.length} passport item${issues.length === 1 ? '' : 's'} need${issues.length === 1 ? 's' : ''} correcting; nothing was saved.`,
			issues
		);
	const before = await getModelPassportItems(db, modelId);
	const changed = parsed.filter(
		(p) => JSON.stringify(p.item ?? null) !== JSON.stringify(before[p.key] ?? null)
	);
	if (!changed.length) return { changed: 0 };
	await writeTx(db, async (tx) => {
		const removed = changed.filter((c) => c.item === null).map((c) => c.key);
		if (removed.length)
			await tx
				.delete(modelPassportItems)
				.where(
					and(eq(modelPassportItems.modelId, modelId), inArray(modelPassportItems.itemKey, removed))
				);
		for (const c of changed) {
			if (!c.item) continue;
			const row = {
				modelId,
				itemKey: c.key,
				value: JSON.stringify(c.item.value),
				unit: c.item.unit,
				updatedAt: now,
				updatedBy: actor.userId
			};
			await tx
				.insert(modelPassportItems)
				.values(row)
				.onConflictDoUpdate({
					target: [modelPassportItems.modelId, modelPassportItems.itemKey],
					set: { value: row.value, unit: row.unit, updatedAt: now, updatedBy: actor.userId }
				});
		}
		await recordAudit(tx, actor, {
			action: 'model.passport_items',
			entity: 'module_model',
			entityId: modelId,
			before: Object.fromEntries(changed.map((c) => [c.key, before[c.key] ?? null])),
			after: Object.fromEntries(changed.map((c) => [c.key, c.item])),
			at: now
		});
	});
	return { changed: changed.length };
}
