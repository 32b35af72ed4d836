import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, organisations, sites, systems, users } from '$lib/server/db/schema';

export interface WorkshopSystemOptions {
	dealer?: string;
	site: { name: string; ownerName: string; ownerContact: string; address: string };
	systemName: string;
}

/**
 * A dealer's workshop site, recorded by the Tidewater technician, with one empty 2 × 1 TC-HC-48
 * system (inverter window 70–130 V): an owner for photos and attachments. Returns its id.
 */
export async function workshopSystem(db: Db, o: WorkshopSystemOptions): Promise<number> {
	const [org] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.name, o.dealer ?? 'Saltmarsh Solar'));
	const [me] = await db.select().from(users).where(eq(users.email, 'tech@tidewater.example'));
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.code, 'TC-HC-48'));
	const [site] = await db
		.insert(sites)
		.values({ dealerOrgId: org.id, ...o.site, application: 'workshop', createdBy: me.id })
		.returning();
	const [system] = await db
		.insert(systems)
		.values({
			siteId: site.id,
			name: o.systemName,
			modelId: model.id,
			series: 2,
			parallel: 1,
			inverterMinV: 70,
			inverterMaxV: 130
		})
		.returning();
	return system.id;
}
