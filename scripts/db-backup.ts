// npm run db:backup -- FILE | s3:KEY: a consistent copy of DATABASE_URL while the app serves
// (VACUUM INTO), checked; with s3:KEY sent to the S3_BUCKET bucket and read back.
import { openDb, DEFAULT_DATABASE_URL } from '$lib/server/db/client';
import { backupDatabase, backupToStore, s3KeyOf } from '$lib/server/db/backup';
import { openS3Store, s3ConfigFromEnv } from '$lib/server/storage';

const target = process.argv[2];
if (!target) {
	console.error(
		'Name the backup: npm run db:backup -- backups/packledger-2026-12-02.db\n' +
			'or, with S3_BUCKET set, npm run db:backup -- s3:backups/packledger-2026-12-02'
	);
	process.exit(2);
}
const db = await openDb(process.env.DATABASE_URL || DEFAULT_DATABASE_URL);
const key = s3KeyOf(target);
let r;
if (key !== null) {
	const config = s3ConfigFromEnv();
	if (!config) {
		console.error(
			's3:… needs S3_BUCKET (and S3_ENDPOINT etc. for a non-AWS store), as for uploads.'
		);
		process.exit(2);
	}
	r = await backupToStore(db, key, await openS3Store(config));
} else r = await backupDatabase(db, target);
const rows = Object.values(r.tables).reduce((a, b) => a + b, 0);
console.log(
	`Backup ${target}: ${(r.bytes / 1e6).toFixed(1)} MB, ${Object.keys(r.tables).length} tables, ${rows} rows, integrity ${r.integrity}`
);
