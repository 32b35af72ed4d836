import QRCode from 'qrcode';
import { asc, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { moduleEvents, moduleModels, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { qrPayloadFor, type LabelView } from '$lib/domain/label';
import { deriveFigures } from '$lib/domain/model';
import { recordAudit, recordEvent } from './audit';
import { getAllocation } from './allocations';
import { findModule } from './modules';

export type Label = LabelView;

type ModelRow = typeof moduleModels.$inferSelect;

/** The rated-data line printed on a label, e.g. "51.7 V · 46.5 Ah · 2.3 kWh usable". */
export function ratedLine(model: ModelRow): string {
	const f = deriveFigures(model);
	return `${f.nominalV.toFixed(1)} V · ${model.ratedAh} Ah · ${(model.usableWh / 1000).toFixed(1)} kWh usable`;
}

/** One label: the QR (SVG from the `qrcode` package) encodes the module's record URL. */
export async function buildLabel(model: ModelRow, serial: string, baseUrl: string): Promise<Label> {
	const payload = qrPayloadFor({ baseUrl, gtin: model.gtin, serial });
	const qrSvg = await QRCode.toString(payload, {
		type: 'svg',
		errorCorrectionLevel: 'M',
		// The quiet zone is part of the symbol: 4 modules of light on every side (ISO/IEC 18004).
		margin: 4,
		color: { dark: '#000000', light: '#ffffff' }
	});
	return {
		serial,
		payload,
		qrSvg,
		modelCode: model.code,
		modelName: model.name,
		rated: ratedLine(model)
	};
}

/** The labels of an allocation, in serial order; `limit` renders only the first few (a preview). */
export async function labelsForAllocation(
	db: Db,
	allocationId: number,
	baseUrl: string,
	limit?: number
) {
	const { allocation, model } = await getAllocation(db, allocationId);
	const query = db
		.select({ serial: modules.serial })
		.from(modules)
		.where(eq(modules.allocationId, allocationId))
		.orderBy(asc(modules.id));
	const rows = limit ? await query.limit(limit) : await query;
	const labels = await Promise.all(rows.map((r) => buildLabel(model, r.serial, baseUrl)));
	return { allocation, model, labels };
}

/** Records that a whole allocation's sheet went to the printer (one event per module). */
export async function recordSheetPrinted(
	db: Db,
	actor: Actor,
	allocationId: number,
	format: string,
	now = new Date()
) {
	const { allocation } = await getAllocation(db, allocationId);
	await writeTx(db, async (tx) => {
		const ids = await tx
			.select({ id: modules.id })
			.from(modules)
			.where(eq(modules.allocationId, allocationId));
		for (let i = 0; i < ids.length; i += 500)
			await tx.insert(moduleEvents).values(
				ids.slice(i, i + 500).map((m) => ({
					moduleId: m.id,
					kind: 'label_printed' as const,
					at: now,
					actorUserId: actor.userId,
					actorLabel: actor.label,
					summary: `Label printed (${format} sheet of allocation ${allocation.id})`
				}))
			);
		await recordAudit(tx, actor, {
			action: 'labels.print',
			entity: 'allocation',
			entityId: allocationId,
			after: { format, count: ids.length },
			at: now
		});
	});
}

/** A single label printed again, e.g. after one was damaged; recorded on the module's timeline. */
export async function recordReprint(
	db: Db,
	actor: Actor,
	serial: string,
	reason: string,
	now = new Date()
) {
	const mod = await findModule(db, actor, serial);
	await writeTx(db, async (tx) => {
		await recordEvent(tx, actor, {
			moduleId: mod.id,
			kind: 'label_reprinted',
			summary: `Label printed again${reason ? `: ${reason}` : ''}`,
			at: now
		});
		await recordAudit(tx, actor, {
			action: 'labels.reprint',
			entity: 'module',
			entityId: serial,
			after: { reason },
			at: now
		});
	});
}
