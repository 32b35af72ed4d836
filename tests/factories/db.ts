import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { migrateDb, openDb, type Db } from '$lib/server/db/client';
import { seedDemo } from '$lib/server/seed/demo';
import { actorForEmail } from '$lib/server/seed/demo-actors';

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
export const actorFor = actorForEmail;
