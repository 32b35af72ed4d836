// npm run db:restore -- FILE | s3:KEY: checks a backup and puts it in place of DATABASE_URL (stop the app first).
import { DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { restoreDatabase, restoreFromStore, s3KeyOf } from '$lib/server/db/backup';
import { openS3Store, s3ConfigFromEnv } from '$lib/server/storage';

const source = process.argv[2];
if (!source) {
	console.error(
		'Name the backup: npm run db:restore -- backups/packledger-2026-12-02.db (or s3:KEY with S3_BUCKET set)'
	);
	process.exit(2);
}
const url = process.env.DATABASE_URL || DEFAULT_DATABASE_URL;
if (!url.startsWith('file:')) {
	console.error(
		'Restore works on a local SQLite file; a libSQL server restores from its own backups.'
	);
	process.exit(2);
}
const key = s3KeyOf(source);
const config = s3ConfigFromEnv();
if (key !== null && !config) {
	console.error('s3:… needs S3_BUCKET (and S3_ENDPOINT etc. for a non-AWS store), as for uploads.');
	process.exit(2);
}
const r =
	key !== null
		? await restoreFromStore(key, await openS3Store(config!), url)
		: await restoreDatabase(source, url);
console.log(
	`Restored ${source} to ${url}: integrity ${r.integrity}, ${Object.keys(r.tables).length} tables.`
);
