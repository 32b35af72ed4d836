import { and, asc, eq, gt } from 'drizzle-orm';
import { Zip, ZipDeflate, strToU8 } from 'fflate';
import { withWriteLock, type Db } from '$lib/server/db';
import {
	moduleCellLots,
	moduleModels,
	modules,
	shipmentItems,
	shipments
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import type { PassportExportInput } from '$lib/schemas/passport';
import { DATA_MODEL } from '$lib/domain/passport';
import { passportContext, passportForRow } from './passports';
import { recordAudit } from './audit';
import { businessDay } from './calendar';

/** Modules read per database round trip: memory stays bounded whatever the lot's size. */
const PAGE = 200;

type ModuleRow = typeof modules.$inferSelect;

/** Resolves the export's scope to a page reader, or says what was not found. */
async function scopeReader(db: Db, input: PassportExportInput) {
	if (input.shipment !== undefined) {
		const [s] = await db.select().from(shipments).where(eq(shipments.id, input.shipment));
		if (!s) throw new NotFoundError(`There is no shipment ${input.shipment}.`);
		return {
			label: `shipment-${s.reference}`,
			page: (after: number) =>
				db
					.select({ m: modules })
					.from(shipmentItems)
					.innerJoin(modules, eq(shipmentItems.moduleId, modules.id))
					.where(and(eq(shipmentItems.shipmentId, s.id), gt(modules.id, after)))
					.orderBy(asc(modules.id))
					.limit(PAGE)
					.then((rows) => rows.map((r) => r.m))
		};
	}
	if (input.lot !== undefined) {
		const lot = input.lot.toUpperCase();
		return {
			label: `lot-${lot}`,
			page: (after: number) =>
				db
					.select({ m: modules })
					.from(moduleCellLots)
					.innerJoin(modules, eq(moduleCellLots.moduleId, modules.id))
					.where(and(eq(moduleCellLots.lotCode, lot), gt(modules.id, after)))
					.orderBy(asc(modules.id))
					.limit(PAGE)
					.then((rows) => rows.map((r) => r.m)),
			lot
		};
	}
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.code, input.model!));
	if (!model) throw new NotFoundError(`There is no model ${input.model}.`);
	return {
		label: `model-${model.code}`,
		page: (after: number) =>
			db
				.select()
				.from(modules)
				.where(and(eq(modules.modelId, model.id), gt(modules.id, after)))
				.orderBy(asc(modules.id))
				.limit(PAGE)
	};
}

/**
 * The passports of a shipment, a cell lot or a model, for handing to a customer or an
 * authority: one JSON document per module at the restricted tier (condition, no history,
 * no owner or site), streamed page by page as JSON Lines or as a ZIP with one file per
 * module and a manifest. The export is audited with its scope and tier.
 */
export async function exportPassports(
	db: Db,
	actor: Actor,
	input: PassportExportInput,
	baseUrl: string,
	now = new Date()
) {
	const scope = await scopeReader(db, input);
	if ('lot' in scope && scope.lot) {
		const [first] = await scope.page(0);
		if (!first) throw new NotFoundError(`No module carries cells from lot ${scope.lot}.`);
	}
	const ctx = await passportContext(db, baseUrl);
	const tier = 'restricted' as const;
	let after = 0;
	let count = 0;
	async function nextPage(): Promise<ModuleRow[]> {
		const rows = await scope.page(after);
		if (rows.length) after = rows[rows.length - 1].id;
		return rows;
	}
	const done = () =>
		withWriteLock(db, () =>
			recordAudit(db, actor, {
				action: 'passport.export',
				entity: 'passport_export',
				entityId: scope.label,
				after: { format: input.format, tier, modules: count },
				at: now
			})
		);
	const stamp = await businessDay(db, now);
	if (input.format === 'jsonl') {
		const enc = new TextEncoder();
		const stream = new ReadableStream<Uint8Array>({
			async pull(controller) {
				const rows = await nextPage();
				if (!rows.length) {
					await done();
					controller.close();
					return;
				}
				let chunk = '';
				for (const m of rows) {
					chunk += JSON.stringify(await passportForRow(db, ctx, m, tier, now)) + '\n';
					count++;
				}
				controller.enqueue(enc.encode(chunk));
			}
		});
		return {
			stream,
			contentType: 'application/x-ndjson; charset=utf-8',
			filename: `passports-${scope.label}-${stamp}.jsonl`
		};
	}
	let zip: Zip;
	const stream = new ReadableStream<Uint8Array>({
		start(controller) {
			zip = new Zip((err, data, final) => {
				if (err) controller.error(err);
				else {
					controller.enqueue(data);
					if (final) controller.close();
				}
			});
		},
		async pull() {
			const rows = await nextPage();
			for (const m of rows) {
				const file = new ZipDeflate(`passports/${m.serial}.json`, { level: 6 });
				zip.add(file);
				file.push(
					strToU8(JSON.stringify(await passportForRow(db, ctx, m, tier, now), null, 2)),
					true
				);
				count++;
			}
			if (!rows.length) {
				const manifest = new ZipDeflate('manifest.json', { level: 6 });
				zip.add(manifest);
				manifest.push(
					strToU8(
						JSON.stringify(
							{
								scope: scope.label,
								tier,
								modules: count,
								generatedAt: now.toISOString(),
								dataModel: `${DATA_MODEL.name} ${DATA_MODEL.version}`
							},
							null,
							2
						)
					),
					true
				);
				await done();
				zip.end();
			}
		}
	});
	return {
		stream,
		contentType: 'application/zip',
		filename: `passports-${scope.label}-${stamp}.zip`
	};
}
