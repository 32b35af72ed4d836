import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { moduleModels, modules } from '$lib/server/db/schema';
import { NotFoundError } from '$lib/server/errors';

/**
 * The module a GS1 Digital Link names: its serial must be in the register and its model
 * must carry the GTIN of the link. Anything else is a NotFoundError that says which.
 */
export async function moduleForDigitalLink(db: Db, gtin14: string, serial: string) {
	const [row] = await db
		.select({ serial: modules.serial, gtin: moduleModels.gtin, code: moduleModels.code })
		.from(modules)
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.where(eq(modules.serial, serial));
	if (!row)
		throw new NotFoundError(
			`No module ${serial} is in the register. Check the serial on the label.`
		);
	if (!row.gtin)
		throw new NotFoundError(
			`Module ${row.serial} is a ${row.code}, which has no GTIN: its label links to /m/${row.serial}.`
		);
	if (row.gtin.padStart(14, '0') !== gtin14)
		throw new NotFoundError(`Module ${row.serial} does not carry GTIN ${gtin14}.`);
	return { serial: row.serial };
}
