import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { migrateDb, openDb, type Db } from '$lib/server/db/client';
import { seedDemo } from '$lib/server/seed/demo';
import type { Actor } from '$lib/server/actor';
import { eq } from 'drizzle-orm';
import { organisations, users } from '$lib/server/db/schema';

/** A fresh database in a temp file with every migration applied. */
export async function createTestDb(): Promise<Db> {
	const dir = mkdtempSync(join(tmpdir(), 'packledger-test-'));
	const db = await openDb(`file:${join(dir, 'test.db')}`);
	await migrateDb(db);
	return db;
}

/** A fresh database with the demo organisations, users and models (fast password hashing aside). */
export async function createSeededDb(): Promise<Db> {
	const db = await createTestDb();
	await seedDemo(db, 'test-password-123');
	return db;
}

/** The Actor for a seeded demo user, as the hooks would build it. */
export async function actorFor(db: Db, email: string): Promise<Actor> {
	const [row] = await db
		.select({ id: users.id, role: users.role, orgId: users.organisationId, kind: organisations.kind })
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.where(eq(users.email, email));
	if (!row) throw new Error(`No seeded user ${email}`);
	return { userId: row.id, role: row.role, organisationId: row.orgId, dealerScoped: row.kind === 'dealer', label: email };
}
