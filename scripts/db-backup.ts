// npm run db:backup -- FILE: a consistent copy of DATABASE_URL while the app serves (VACUUM INTO).
import { openDb, DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { backupDatabase } from '$lib/server/db/backup';

const file = process.argv[2];
if (!file) {
	console.error('Name the backup file: npm run db:backup -- backups/packledger-2026-12-02.db');
	process.exit(2);
}
const db = await openDb(process.env.DATABASE_URL || DEFAULT_DATABASE_URL);
const r = await backupDatabase(db, file);
const rows = Object.values(r.tables).reduce((a, b) => a + b, 0);
console.log(
	`Backup ${file}: ${(r.bytes / 1e6).toFixed(1)} MB, ${Object.keys(r.tables).length} tables, ${rows} rows, integrity ${r.integrity}`
);
