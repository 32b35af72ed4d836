import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getModuleRecord, getPublicRecord } from '$lib/server/services/modules';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';
import { businessDay } from '$lib/server/services/calendar';

/** A module as the caller may see it; another dealer's serial answers 404 like an unknown one. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'lookUpModules');
	const db = await getDb();
	try {
		const record = await getModuleRecord(db, actor, event.params.serial);
		const today = await businessDay(db, new Date());
		const publicRecord = await getPublicRecord(db, record.module.serial, today);
		const { module: m, model, builder, dealer, events } = record;
		return json({
			serial: m.serial,
			state: m.state,
			model: { code: model.code, name: model.name, gtin: model.gtin },
			builtAt: m.builtAt,
			builtBy: builder?.name ?? null,
			cellLots: m.cellLots,
			buildChecks: m.buildChecks,
			testOutcome: m.testOutcome,
			testedAt: m.testedAt,
			dealer: dealer?.name ?? null,
			shippedAt: m.shippedAt,
			commissionedAt: m.commissionedAt,
			warranty: publicRecord.warranty,
			publicRecord,
			events: events.map((e) => ({ kind: e.kind, at: e.at, by: e.actorLabel, summary: e.summary }))
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
