import { createHash } from 'node:crypto';
import { and, asc, desc, eq, like, or, sql } from 'drizzle-orm';
import { dataVersion, type Db } from '$lib/server/db';
import { alias } from 'drizzle-orm/sqlite-core';
import {
	claimModules,
	claims,
	factoryTests,
	imports,
	moduleEvents,
	moduleModels,
	modules,
	organisations,
	sites,
	systems,
	users
} from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import { extractSerialFromScan, parseSerial } from '$lib/domain/serial';
import { toPublicRecord, type PublicRecord } from '$lib/domain/public-record';
import { factoryTestsOf } from './workshop';
import { conditionFacts, openCampaignsOf } from './module-facts';

export const UNKNOWN_SERIAL = (serial: string) =>
	`No module ${serial} is in the register. Check the serial on the label (it looks like PL48-26-000123F).`;

/**
 * Finds a module by serial as the actor may see it. A dealer's staff only find modules
 * shipped to their organisation; any other serial answers exactly as an unknown one.
 * `actor` null means the public (anonymous) view, which every module has.
 */
export async function findModule(db: Db, actor: Actor | null, serialText: string) {
	const parsed = parseSerial(serialText);
	if (!parsed.ok)
		throw new NotFoundError(
			`“${serialText.slice(0, 40)}” is not a module serial: ${parsed.reason}.`
		);
	const [row] = await db.select().from(modules).where(eq(modules.serial, parsed.serial));
	const scope = actor ? dealerScopeOf(actor) : null;
	if (!row || (scope !== null && row.dealerOrgId !== scope))
		throw new NotFoundError(UNKNOWN_SERIAL(parsed.serial));
	return row;
}

/** The serial a scan points at: a bare serial, our /m/ URL, or a GS1 Digital Link whose GTIN matches the module's model. */
export async function serialFromScan(
	db: Db,
	actor: Actor,
	scanText: string,
	baseUrl?: string
): Promise<string> {
	const scan = extractSerialFromScan(scanText, baseUrl);
	if (scan.kind === 'unknown')
		throw new NotFoundError(`This scan is not a Packledger label: ${scan.reason}.`);
	const mod = await findModule(db, actor, scan.serial);
	if (scan.kind === 'digital-link') {
		const [model] = await db
			.select({ gtin: moduleModels.gtin, code: moduleModels.code })
			.from(moduleModels)
			.where(eq(moduleModels.id, mod.modelId));
		if (model.gtin !== scan.gtin)
			throw new NotFoundError(
				`The label's GTIN ${scan.gtin} does not belong to ${mod.serial} (a ${model.code}). The label may be from another module.`
			);
	}
	return mod.serial;
}

const dealerOrg = alias(organisations, 'dealer');

/**
 * The public record's one query: module, model, dealer and the assembler in a single join,
 * prepared once (no query building per view).
 */
const preparedFor = new WeakMap<Db, ReturnType<typeof preparePublicQuery>>();
function preparePublicQuery(db: Db) {
	return db
		.select({
			id: modules.id,
			serial: modules.serial,
			builtAt: modules.builtAt,
			state: modules.state,
			scrappedAt: modules.scrappedAt,
			scrapReason: modules.scrapReason,
			updatedAt: modules.updatedAt,
			lifecycleStatus: modules.lifecycleStatus,
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
 * stands (`dataVersion`: PRAGMA data_version on a read-only connection, which every commit by
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
		today,
		...(await conditionFacts(db, row))
	});
	if (version) {
		if (publicCache.size >= 10_000) publicCache.clear();
		publicCache.set(key, { version, record });
	}
	return record;
}

/**
 * A module's factory results as timeline entries, read from `factory_tests` itself: an
 * import of 100,000 results writes no second row per result. Results an older version
 * copied into `module_events` (kind `tested`, detail.testId) are not shown twice. Ids are
 * negative so they never meet an event's id.
 */
async function testEvents(db: Db, moduleId: number) {
	const rows = await db
		.select({
			id: factoryTests.id,
			at: factoryTests.testedAt,
			outcome: factoryTests.outcome,
			rig: factoryTests.rig,
			failures: factoryTests.failures,
			importId: factoryTests.importId,
			actorUserId: imports.uploadedBy,
			actorLabel: imports.uploaderLabel
		})
		.from(factoryTests)
		.leftJoin(imports, eq(imports.id, factoryTests.importId))
		.where(
			and(
				eq(factoryTests.moduleId, moduleId),
				sql`NOT EXISTS (SELECT 1 FROM module_events e WHERE e.module_id = ${moduleId} AND e.kind = 'tested' AND e.detail ->> 'testId' = ${factoryTests.id})`
			)
		);
	return rows.map((t) => ({
		id: -t.id,
		moduleId,
		kind: 'tested' as const,
		at: t.at,
		actorUserId: t.actorUserId,
		actorLabel: t.actorLabel ?? 'Factory test rig',
		summary:
			t.outcome === 'pass'
				? `Factory test passed${t.rig ? ` on ${t.rig}` : ''}`
				: `Factory test failed: ${(JSON.parse(t.failures) as { message: string }[]).map((f) => f.message).join('; ')}`,
		detail: JSON.stringify({ testId: t.id, importId: t.importId })
	}));
}

/**
 * The record's own lookups, prepared once per database handle (`.prepare()` with
 * placeholders): drizzle then builds their SQL once, not on every view of a record.
 */
function prepareRecordQueries(db: Db) {
	const id = sql.placeholder('id');
	return {
		model: db.select().from(moduleModels).where(eq(moduleModels.id, id)).prepare(),
		builder: db
			.select({ name: users.name, email: users.email })
			.from(users)
			.where(eq(users.id, id))
			.prepare(),
		dealer: db
			.select({ id: organisations.id, name: organisations.name, email: organisations.contactEmail })
			.from(organisations)
			.where(eq(organisations.id, id))
			.prepare(),
		events: db
			.select()
			.from(moduleEvents)
			.where(eq(moduleEvents.moduleId, id))
			.orderBy(desc(moduleEvents.at), desc(moduleEvents.id))
			.prepare(),
		placement: db
			.select({ systemId: systems.id, system: systems.name, siteId: sites.id, site: sites.name })
			.from(systems)
			.innerJoin(sites, eq(systems.siteId, sites.id))
			.where(eq(systems.id, id))
			.prepare(),
		claims: db
			.select({
				id: claims.id,
				reference: claims.reference,
				state: claims.state,
				filedAt: claims.filedAt
			})
			.from(claimModules)
			.innerJoin(claims, eq(claimModules.claimId, claims.id))
			.where(eq(claimModules.moduleId, id))
			.orderBy(desc(claims.filedAt))
			.prepare()
	};
}
const recordQueriesFor = new WeakMap<Db, ReturnType<typeof prepareRecordQueries>>();

/** The full record for signed-in staff and the module's own dealer: module, model, builder, timeline. */
export async function getModuleRecord(db: Db, actor: Actor, serialText: string) {
	const mod = await findModule(db, actor, serialText);
	let q = recordQueriesFor.get(db);
	if (!q) recordQueriesFor.set(db, (q = prepareRecordQueries(db)));
	const [model] = await q.model.execute({ id: mod.modelId });
	const [builder] = mod.builtBy ? await q.builder.execute({ id: mod.builtBy }) : [];
	const [dealer] = mod.dealerOrgId ? await q.dealer.execute({ id: mod.dealerOrgId }) : [];
	const stored = await q.events.execute({ id: mod.id });
	const events = [...stored, ...(await testEvents(db, mod.id))].sort(
		(a, b) => b.at.getTime() - a.at.getTime() || b.id - a.id
	);
	const [placement] = mod.systemId ? await q.placement.execute({ id: mod.systemId }) : [];
	const moduleClaims = await q.claims.execute({ id: mod.id });
	return {
		module: {
			...mod,
			cellLots: mod.cellLots ? (JSON.parse(mod.cellLots) as string[]) : [],
			buildChecks: mod.buildChecks ? (JSON.parse(mod.buildChecks) as Record<string, boolean>) : {}
		},
		model,
		builder: builder ?? null,
		dealer: dealer ?? null,
		placement: placement ?? null,
		claims: moduleClaims,
		tests: await factoryTestsOf(db, mod),
		campaigns: await openCampaignsOf(db, mod.id),
		events: events.map((e) => ({ ...e, detail: e.detail ? JSON.parse(e.detail) : null }))
	};
}

/** Serial search for the lookup page (prefix or contained text), scoped for dealers. */
export async function searchModules(db: Db, actor: Actor, text: string, limit = 25) {
	const q = text
		.trim()
		.toUpperCase()
		.replace(/[^A-Z0-9-]/g, '');
	if (q.length < 2) return [];
	const scope = dealerScopeOf(actor);
	const where = and(
		or(like(modules.serial, `${q}%`), like(modules.serial, `%${q}%`)),
		scope === null ? undefined : eq(modules.dealerOrgId, scope)
	);
	return db
		.select({ serial: modules.serial, state: modules.state, modelCode: moduleModels.code })
		.from(modules)
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.where(where)
		.orderBy(asc(modules.serial))
		.limit(limit);
}

/**
 * The validator of an anonymous public-record page: a hash of the record and the build, so a
 * write to the module or a new release gives a new one (RFC 9110 §8.8.3; weak, since the
 * page's bytes differ in their CSP nonce while its content is the same).
 */
export function publicRecordEtag(record: PublicRecord, build: string): string {
	return `W/"${createHash('sha256').update(build).update(JSON.stringify(record)).digest('base64url').slice(0, 27)}"`;
}
