// Fills DATABASE_URL with the invented demo scenario. Running it twice is harmless.
import { migrateDb, openDb, DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { seedDemo } from '$lib/server/seed/demo';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { closeMailer } from '$lib/server/mail';

const url = process.env.DATABASE_URL || DEFAULT_DATABASE_URL;
const db = await openDb(url, process.env.DATABASE_AUTH_TOKEN);
await migrateDb(db);
await seedDemo(db, process.env.DEMO_PASSWORD || 'packledger-demo');
const fleet = await seedDemoFleet(db);
await closeMailer(db);
if (!fleet) console.log('The register already holds modules: the demo fleet was not added again.');
console.log(`Demo data in ${url}`);
db.$client.close();
process.exit(0);
