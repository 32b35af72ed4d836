import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, organisations, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';

/** The Actor of a seeded user, as the request hooks would build it. */
export async function actorForEmail(db: Db, email: string): Promise<Actor> {
	const [row] = await db
		.select({ id: users.id, role: users.role, orgId: users.organisationId, kind: organisations.kind })
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.where(eq(users.email, email));
	if (!row) throw new Error(`No seeded user ${email}`);
	return { userId: row.id, role: row.role, organisationId: row.orgId, dealerScoped: row.kind === 'dealer', label: email };
}

export async function getModelIdByCode(db: Db, code: string): Promise<number> {
	const [m] = await db.select({ id: moduleModels.id }).from(moduleModels).where(eq(moduleModels.code, code));
	if (!m) throw new Error(`No model ${code}`);
	return m.id;
}
