// npm run db:restore -- FILE: checks a backup and puts it in place of DATABASE_URL (stop the app first).
import { DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { restoreDatabase } from '$lib/server/db/backup';

const file = process.argv[2];
if (!file) {
	console.error('Name the backup file: npm run db:restore -- backups/packledger-2026-12-02.db');
	process.exit(2);
}
const url = process.env.DATABASE_URL || DEFAULT_DATABASE_URL;
if (!url.startsWith('file:')) {
	console.error(
		'Restore works on a local SQLite file; a libSQL server restores from its own backups.'
	);
	process.exit(2);
}
const r = await restoreDatabase(file, url);
console.log(
	`Restored ${file} to ${url}: integrity ${r.integrity}, ${Object.keys(r.tables).length} tables.`
);
