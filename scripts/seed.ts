// Fills DATABASE_URL with the invented demo scenario. Running it twice is harmless.
import { migrateDb, openDb, DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { seedDemo } from '$lib/server/seed/demo';

const url = process.env.DATABASE_URL || DEFAULT_DATABASE_URL;
const db = await openDb(url, process.env.DATABASE_AUTH_TOKEN);
await migrateDb(db);
await seedDemo(db, process.env.DEMO_PASSWORD || 'packledger-demo');
console.log(`Demo data in ${url}`);
db.$client.close();
process.exit(0);
