import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, modules, organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { allocateSerials } from '$lib/server/services/allocations';
import { registerBuild } from '$lib/server/services/builds';
import { BUILD_CHECKS } from '$lib/schemas/build';

export const ALL_CHECKS = BUILD_CHECKS.map((c) => c.key);

export async function modelId(db: Db, code = 'TC-HC-48') {
	const [m] = await db.select().from(moduleModels).where(eq(moduleModels.code, code));
	return m.id;
}

/** Allocates `count` serials of a model and builds the first `built` of them. */
export async function makeModules(
	db: Db,
	actor: Actor,
	opts: { code?: string; count?: number; built?: number; lots?: string[] } = {}
) {
	const alloc = await allocateSerials(db, actor, {
		modelId: await modelId(db, opts.code),
		count: opts.count ?? 3
	});
	const rows = await db.select().from(modules).where(eq(modules.allocationId, alloc.id));
	for (const m of rows.slice(0, opts.built ?? 0))
		await registerBuild(db, actor, m.serial, {
			cellLots: opts.lots ?? ['HCL-2611-A'],
			checks: ALL_CHECKS,
			notes: ''
		});
	return rows.map((r) => r.serial);
}

/** Marks modules as shipped to a dealer directly (for scope tests before shipments exist). */
export async function assignToDealer(db: Db, serials: string[], dealerName: string) {
	const [org] = await db.select().from(organisations).where(eq(organisations.name, dealerName));
	for (const s of serials)
		await db
			.update(modules)
			.set({ dealerOrgId: org.id, state: 'shipped' })
			.where(eq(modules.serial, s));
	return org.id;
}
