import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels } from '$lib/server/db/schema';
import { findActor } from '$lib/server/services/actors';
import type { Actor } from '$lib/server/actor';

/** The Actor of a seeded user, as the request hooks would build it. */
export async function actorForEmail(db: Db, email: string): Promise<Actor> {
	const actor = await findActor(db, { email });
	if (!actor) throw new Error(`No seeded user ${email}`);
	return actor;
}

export async function getModelIdByCode(db: Db, code: string): Promise<number> {
	const [m] = await db
		.select({ id: moduleModels.id })
		.from(moduleModels)
		.where(eq(moduleModels.code, code));
	if (!m) throw new Error(`No model ${code}`);
	return m.id;
}
