import { eq, type SQL } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { organisations, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';

/** The Actor of an active user of an active organisation (by id or e-mail), with the organisation's kind deciding dealer scope; null if none. */
export async function findActor(
	db: Db,
	by: { id: number } | { email: string }
): Promise<Actor | null> {
	const where: SQL = 'id' in by ? eq(users.id, by.id) : eq(users.email, by.email);
	const [row] = await db
		.select({
			id: users.id,
			email: users.email,
			role: users.role,
			active: users.active,
			orgId: users.organisationId,
			orgKind: organisations.kind,
			orgActive: organisations.active,
			sessionVersion: users.sessionVersion
		})
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.where(where)
		.limit(1);
	// A deactivated organisation's people are no longer anyone here.
	if (!row || !row.active || !row.orgActive) return null;
	return {
		userId: row.id,
		role: row.role,
		organisationId: row.orgId,
		dealerScoped: row.orgKind === 'dealer',
		label: row.email,
		sessionVersion: row.sessionVersion
	};
}
