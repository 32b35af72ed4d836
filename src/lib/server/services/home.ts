import { count, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { modules, organisations } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';

/** Module counts by state for the home page, limited to the dealer's own units for dealer staff. */
export async function homeFigures(db: Db, actor: Actor) {
	const scope = dealerScopeOf(actor);
	const q = db.select({ state: modules.state, n: count() }).from(modules);
	const rows = await (scope === null ? q : q.where(eq(modules.dealerOrgId, scope))).groupBy(
		modules.state
	);
	const [org] = actor.organisationId
		? await db
				.select({ name: organisations.name })
				.from(organisations)
				.where(eq(organisations.id, actor.organisationId))
		: [];
	return {
		byState: Object.fromEntries(rows.map((r) => [r.state, r.n])) as Record<string, number>,
		organisation: org?.name ?? ''
	};
}
