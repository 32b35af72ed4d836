import { and, asc, eq } from 'drizzle-orm';
import { withWriteLock, type Db } from '$lib/server/db';
import { moduleModels, organisations, userPrefs } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { InvalidInputError } from '$lib/server/errors';
import { FLEET_COLUMN_IDS, type FleetColumn } from '$lib/schemas/fleet';

const PREFS_KEY = 'fleet.columns';

/** The filter choices for the fleet page: models, and dealers for the assembler's staff only. */
export async function fleetFilterOptions(db: Db, actor: Actor) {
	const models = await db
		.select({ code: moduleModels.code, name: moduleModels.name })
		.from(moduleModels)
		.orderBy(asc(moduleModels.code));
	if (dealerScopeOf(actor) !== null) return { models, dealers: null };
	const dealers = await db
		.select({ id: organisations.id, name: organisations.name })
		.from(organisations)
		.where(eq(organisations.kind, 'dealer'))
		.orderBy(asc(organisations.name));
	return { models, dealers };
}

const known = (ids: unknown): FleetColumn[] =>
	Array.isArray(ids) ? FLEET_COLUMN_IDS.filter((c) => ids.includes(c)) : [];

/** The columns a person chose to see in the fleet table, or null when they never chose. */
export async function getColumnPrefs(db: Db, userId: number): Promise<FleetColumn[] | null> {
	const [row] = await db
		.select({ value: userPrefs.value })
		.from(userPrefs)
		.where(and(eq(userPrefs.userId, userId), eq(userPrefs.key, PREFS_KEY)));
	return row ? known(JSON.parse(row.value)) : null;
}

/**
 * Keeps a person's visible columns (serial is always shown). A display preference,
 * not register data, so it is not written to the audit trail.
 */
export async function setColumnPrefs(
	db: Db,
	userId: number,
	columns: string[]
): Promise<FleetColumn[]> {
	const unknown = columns.filter((c) => !(FLEET_COLUMN_IDS as string[]).includes(c));
	if (unknown.length) {
		throw new InvalidInputError(
			`Unknown column ${unknown.join(', ')}.`,
			unknown.map((c) => ({
				path: 'columns',
				message: `“${c}” is not a column; choose from ${FLEET_COLUMN_IDS.join(', ')}.`
			}))
		);
	}
	const chosen = known(['serial', ...columns]);
	const value = JSON.stringify(chosen);
	await withWriteLock(db, () =>
		db
			.insert(userPrefs)
			.values({ userId, key: PREFS_KEY, value })
			.onConflictDoUpdate({ target: [userPrefs.userId, userPrefs.key], set: { value } })
	);
	return chosen;
}
