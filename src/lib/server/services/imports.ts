import { desc, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { factoryTests, imports, modules } from '$lib/server/db/schema';
import { NotFoundError } from '$lib/server/errors';
import { summary } from './import-summary';

/**
 * Factory test imports: `previewImport` (import-preview: read, judge, plan), `commitImport`
 * (import-commit: store the plan in short statements, all or nothing), and here the reading
 * of stored imports.
 */
export { previewImport } from './import-preview';
export { commitImport, STATE_UPDATE_SQL, INSERT_CHUNK_SQL } from './import-commit';
export type { ImportResult } from './import-summary';

export const MAX_IMPORT_BYTES = 25 * 1024 * 1024;

export async function listImports(db: Db, limit = 50) {
	return db
		.select({
			id: imports.id,
			fileName: imports.fileName,
			uploaderLabel: imports.uploaderLabel,
			createdAt: imports.createdAt,
			status: imports.status,
			rowsTotal: imports.rowsTotal,
			accepted: imports.accepted,
			rejected: imports.rejected,
			duplicates: imports.duplicates,
			passed: imports.passed,
			failed: imports.failed,
			committedAt: imports.committedAt
		})
		.from(imports)
		.orderBy(desc(imports.id))
		.limit(limit);
}

export async function getImport(db: Db, id: number) {
	const [row] = await db.select().from(imports).where(eq(imports.id, id));
	if (!row) throw new NotFoundError(`Import ${id} does not exist.`);
	return summary(row);
}

/** The results an import stored, with their module serials (first `limit`). */
export async function importResults(db: Db, id: number, limit = 500) {
	return db
		.select({
			id: factoryTests.id,
			serial: modules.serial,
			testedAt: factoryTests.testedAt,
			capacityAh: factoryTests.capacityAh,
			dcirMohm: factoryTests.dcirMohm,
			cellSpreadMv: factoryTests.cellSpreadMv,
			insulationMohm: factoryTests.insulationMohm,
			outcome: factoryTests.outcome,
			failures: factoryTests.failures
		})
		.from(factoryTests)
		.innerJoin(modules, eq(factoryTests.moduleId, modules.id))
		.where(eq(factoryTests.importId, id))
		.orderBy(factoryTests.id)
		.limit(limit);
}
