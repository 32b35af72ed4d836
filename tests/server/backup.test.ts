import { describe, expect, it } from 'vitest';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createClient } from '@libsql/client';
import { withWriteLock } from '$lib/server/db/client';
import { backupDatabase, checkDatabaseFile, restoreDatabase } from '$lib/server/db/backup';
import { createSeededDb } from '../factories/db';

// The check values come from SQLite itself (PRAGMA integrity_check answers "ok" for a sound
// file, sqlite.org/pragma.html#pragma_integrity_check) and from counting rows in the source.
describe('db:backup / db:restore', () => {
	it('takes a consistent copy while writes go on, and restores it with checks', async () => {
		const db = await createSeededDb();
		const dir = mkdtempSync(join(tmpdir(), 'packledger-backup-'));
		const write = (i: number) =>
			withWriteLock(db, () =>
				db.$client.execute({
					sql: "INSERT INTO audit_log (at, actor_label, action, entity, entity_id) VALUES (?, 'backup test', 'test.write', 'test', ?)",
					args: [Date.now(), String(i)]
				})
			);
		const count = async () =>
			Number((await db.$client.execute('SELECT count(*) AS n FROM audit_log')).rows[0].n);
		for (let i = 0; i < 200; i++) await write(i);
		const before = await count();
		// Writes keep coming while the backup runs.
		let stop = false;
		let written = 0;
		const writer = (async () => {
			while (!stop) {
				await write(1000 + written++);
				await new Promise((r) => setImmediate(r));
			}
		})();
		const backup = await backupDatabase(db, join(dir, 'backup.db'));
		stop = true;
		await writer;
		const after = await count();
		expect(backup.integrity).toBe('ok');
		expect(backup.tables.audit_log).toBeGreaterThanOrEqual(before);
		expect(backup.tables.audit_log).toBeLessThanOrEqual(after);
		expect(written).toBeGreaterThan(0);
		await expect(backupDatabase(db, join(dir, 'backup.db'))).rejects.toThrow(/already exists/);

		// Restore over a database that has since changed: the backup's rows come back exactly.
		const target = join(dir, 'restored.db');
		const other = createClient({ url: `file:${target}` });
		await other.execute('CREATE TABLE stray (x)');
		other.close();
		const restored = await restoreDatabase(join(dir, 'backup.db'), `file:${target}`);
		expect(restored.integrity).toBe('ok');
		expect(restored.tables).toEqual(backup.tables);
		expect(restored.tables.stray).toBeUndefined();
		expect((await checkDatabaseFile(target)).tables.modules).toBe(backup.tables.modules);
	});

	it('refuses a file that is not a sound Packledger database and replaces nothing', async () => {
		const dir = mkdtempSync(join(tmpdir(), 'packledger-backup-'));
		const bogus = createClient({ url: `file:${join(dir, 'bogus.db')}` });
		await bogus.execute('CREATE TABLE t (x)');
		bogus.close();
		await expect(
			restoreDatabase(join(dir, 'bogus.db'), `file:${join(dir, 'target.db')}`)
		).rejects.toThrow(/not a Packledger database/);
		await expect(checkDatabaseFile(join(dir, 'missing.db'))).rejects.toThrow(/does not exist/);
	});
});
