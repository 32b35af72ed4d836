// Applies pending migrations from drizzle/ to DATABASE_URL (default: data/packledger.db).
import { migrateDb, openDb, DEFAULT_DATABASE_URL } from '$lib/server/db/client';

const url = process.env.DATABASE_URL || DEFAULT_DATABASE_URL;
const db = await openDb(url, process.env.DATABASE_AUTH_TOKEN);
await migrateDb(db);
console.log(`Migrations applied to ${url}`);
db.$client.close();
