import { desc, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, organisations, shipments } from '$lib/server/db/schema';

/** What a lot export can be chosen from: the latest shipments and every model. */
export async function listPassportScopes(db: Db) {
	const recent = await db
		.select({ id: shipments.id, reference: shipments.reference, dealer: organisations.name })
		.from(shipments)
		.innerJoin(organisations, eq(shipments.dealerOrgId, organisations.id))
		.orderBy(desc(shipments.id))
		.limit(50);
	const models = await db
		.select({ code: moduleModels.code, name: moduleModels.name })
		.from(moduleModels)
		.orderBy(moduleModels.code);
	return { shipments: recent, models };
}
