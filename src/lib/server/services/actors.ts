import { eq, sql, type SQL } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { organisations, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';

const ACTOR_ROW = {
	id: users.id,
	email: users.email,
	role: users.role,
	active: users.active,
	orgId: users.organisationId,
	orgKind: organisations.kind,
	orgActive: organisations.active,
	sessionVersion: users.sessionVersion
};

function actorQuery(db: Db) {
	return db
		.select(ACTOR_ROW)
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id));
}

/**
 * The lookup by id runs on every signed-in request (the hook re-reads the user): prepared once
 * per database, so drizzle does not build its SQL again each time (~0.5 ms a request).
 */
const byIdFor = new WeakMap<Db, ReturnType<typeof prepareById>>();
const prepareById = (db: Db) =>
	actorQuery(db)
		.where(eq(users.id, sql.placeholder('id')))
		.limit(1)
		.prepare();

/** The Actor of an active user of an active organisation (by id or e-mail), with the organisation's kind deciding dealer scope; null if none. */
export async function findActor(
	db: Db,
	by: { id: number } | { email: string }
): Promise<Actor | null> {
	let row: Awaited<ReturnType<typeof actorQuery>>[number] | undefined;
	if ('id' in by) {
		let byId = byIdFor.get(db);
		if (!byId) byIdFor.set(db, (byId = prepareById(db)));
		[row] = await byId.execute({ id: by.id });
	} else {
		const where: SQL = eq(users.email, by.email);
		[row] = await actorQuery(db).where(where).limit(1);
	}
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
