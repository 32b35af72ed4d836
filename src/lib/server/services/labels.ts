import QRCode from 'qrcode';
import { asc, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock, writeTx } from '$lib/server/db';
import { moduleEvents, moduleModels, moduleQrCodes, modules } from '$lib/server/db/schema';
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

/**
 * The QR of one payload as SVG (the `qrcode` package), error correction M. The quiet zone is
 * part of the symbol: 4 modules of light on every side (ISO/IEC 18004).
 */
const drawQr = (payload: string) =>
	QRCode.toString(payload, {
		type: 'svg',
		errorCorrectionLevel: 'M',
		margin: 4,
		color: { dark: '#000000', light: '#ffffff' }
	});

/** One label: the QR (SVG from the `qrcode` package) encodes the module's record URL. */
export async function buildLabel(model: ModelRow, serial: string, baseUrl: string): Promise<Label> {
	const payload = qrPayloadFor({ baseUrl, gtin: model.gtin, serial });
	const qrSvg = await drawQr(payload);
	return {
		serial,
		payload,
		qrSvg,
		modelCode: model.code,
		modelName: model.name,
		rated: ratedLine(model)
	};
}

/**
 * The labels of an allocation, in serial order; `limit` renders only the first few (a
 * preview). Each QR is drawn once and kept in `module_qr_codes`: a sheet of 1,000 labels
 * reads 1,000 stored SVGs instead of encoding 1,000 codes. A stored code whose payload is
 * not today's (the public address changed) is drawn again and replaced.
 */
export async function labelsForAllocation(
	db: Db,
	allocationId: number,
	baseUrl: string,
	limit?: number
) {
	const { allocation, model } = await getAllocation(db, allocationId);
	const query = db
		.select({
			id: modules.id,
			serial: modules.serial,
			payload: moduleQrCodes.payload,
			svg: moduleQrCodes.svg
		})
		.from(modules)
		.leftJoin(moduleQrCodes, eq(moduleQrCodes.moduleId, modules.id))
		.where(eq(modules.allocationId, allocationId))
		.orderBy(asc(modules.id));
	const rows = limit ? await query.limit(limit) : await query;
	const rated = ratedLine(model);
	const fresh: [number, string, string][] = [];
	const labels: Label[] = [];
	for (const r of rows) {
		const payload = qrPayloadFor({ baseUrl, gtin: model.gtin, serial: r.serial });
		let qrSvg = r.svg;
		if (r.payload !== payload || !qrSvg) {
			qrSvg = await drawQr(payload);
			fresh.push([r.id, payload, qrSvg]);
		}
		labels.push({
			serial: r.serial,
			payload,
			qrSvg,
			modelCode: model.code,
			modelName: model.name,
			rated
		});
	}
	if (fresh.length) await keepQrCodes(db, fresh);
	return { allocation, model, labels };
}

/** Stores drawn QR codes ([module id, payload, svg]), replacing older ones. */
async function keepQrCodes(db: Db, codes: [number, string, string][]) {
	await withWriteLock(db, () =>
		db.$client.execute({
			sql: `INSERT INTO module_qr_codes (module_id, payload, svg)
			      SELECT value ->> 0, value ->> 1, value ->> 2 FROM json_each(?) WHERE true
			      ON CONFLICT (module_id) DO UPDATE SET payload = excluded.payload, svg = excluded.svg`,
			args: [JSON.stringify(codes)]
		})
	);
}

/** Draws and keeps the QR codes of a new allocation, so its first sheet is as fast as the next. */
export async function prepareLabels(db: Db, allocationId: number, baseUrl: string) {
	await labelsForAllocation(db, allocationId, baseUrl);
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
