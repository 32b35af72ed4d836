import { createHash } from 'node:crypto';
import { eq, sql } from 'drizzle-orm';
import { alias } from 'drizzle-orm/sqlite-core';
import { dataVersion, type Db } from '$lib/server/db';
import { moduleModels, modules, organisations } from '$lib/server/db/schema';
import { NotFoundError } from '$lib/server/errors';
import { parseSerial } from '$lib/domain/serial';
import { toPublicRecord, type PublicRecord } from '$lib/domain/public-record';

export const UNKNOWN_SERIAL = (serial: string) =>
	`No module ${serial} is in the register. Check the serial on the label (it looks like PL48-26-000123F).`;

const dealerOrg = alias(organisations, 'dealer');

/**
 * The public record's one query: module, model, dealer and the assembler in a single join,
 * prepared once (no query building per view).
 */
const preparedFor = new WeakMap<Db, ReturnType<typeof preparePublicQuery>>();
function preparePublicQuery(db: Db) {
	return db
		.select({
			serial: modules.serial,
			builtAt: modules.builtAt,
			state: modules.state,
			warrantyStartsOn: modules.warrantyStartsOn,
			warrantyEndsOn: modules.warrantyEndsOn,
			model: moduleModels,
			dealerName: dealerOrg.name,
			dealerEmail: dealerOrg.contactEmail,
			assemblerName: sql<
				string | null
			>`(SELECT name FROM organisations WHERE kind = 'assembler' ORDER BY id LIMIT 1)`,
			assemblerEmail: sql<
				string | null
			>`(SELECT contact_email FROM organisations WHERE kind = 'assembler' ORDER BY id LIMIT 1)`
		})
		.from(modules)
		.innerJoin(moduleModels, eq(moduleModels.id, modules.modelId))
		.leftJoin(dealerOrg, eq(dealerOrg.id, modules.dealerOrgId))
		.where(eq(modules.serial, sql.placeholder('serial')))
		.prepare();
}

/**
 * Public records already built, per database, serial and day, kept while the data version
 * stands (`dataVersion`: PRAGMA data_version on the reader connection, which every commit by
 * this process or another app server on the file changes). The record is the same for
 * everyone, so one read serves every scan of a label until a write.
 */
const publicCaches = new WeakMap<Db, Map<string, { version: string; record: PublicRecord }>>();

/** The public record of a module: rated data, build month, warranty state, contact. No customer data. */
export async function getPublicRecord(db: Db, serialText: string, today: string) {
	const parsed = parseSerial(serialText);
	if (!parsed.ok)
		throw new NotFoundError(
			`“${serialText.slice(0, 40)}” is not a module serial: ${parsed.reason}.`
		);
	const version = await dataVersion(db);
	const key = `${parsed.serial}|${today}`;
	let publicCache = publicCaches.get(db);
	if (!publicCache) publicCaches.set(db, (publicCache = new Map()));
	const hit = version ? publicCache.get(key) : undefined;
	if (hit && hit.version === version) return hit.record;
	let query = preparedFor.get(db);
	if (!query) preparedFor.set(db, (query = preparePublicQuery(db)));
	const [row] = await query.execute({ serial: parsed.serial });
	if (!row) throw new NotFoundError(UNKNOWN_SERIAL(parsed.serial));
	const record = toPublicRecord({
		serial: row.serial,
		model: row.model,
		builtAt: row.builtAt,
		state: row.state,
		warranty:
			row.warrantyStartsOn && row.warrantyEndsOn
				? { startsOn: row.warrantyStartsOn, endsOn: row.warrantyEndsOn }
				: null,
		assembler: { name: row.assemblerName ?? 'The assembler', email: row.assemblerEmail ?? null },
		dealer: row.dealerName ? { name: row.dealerName, email: row.dealerEmail } : null,
		today
	});
	if (version) {
		if (publicCache.size >= 10_000) publicCache.clear();
		publicCache.set(key, { version, record });
	}
	return record;
}

/**
 * The validator of an anonymous public-record page: a hash of the record and the build, so a
 * write to the module or a new release gives a new one (RFC 9110 §8.8.3; weak, since the
 * page's bytes differ in their CSP nonce while its content is the same).
 */
export function publicRecordEtag(record: PublicRecord, build: string): string {
	return `W/"${createHash('sha256').update(build).update(JSON.stringify(record)).digest('base64url').slice(0, 27)}"`;
}
