import { and, asc, desc, eq, like, or, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
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
import { UNKNOWN_SERIAL } from './modules-public';

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

export { getPublicRecord, publicRecordEtag, UNKNOWN_SERIAL } from './modules-public';

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

/** The full record for signed-in staff and the module's own dealer: module, model, builder, timeline. */
export async function getModuleRecord(db: Db, actor: Actor, serialText: string) {
	const mod = await findModule(db, actor, serialText);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, mod.modelId));
	const [builder] = mod.builtBy
		? await db
				.select({ name: users.name, email: users.email })
				.from(users)
				.where(eq(users.id, mod.builtBy))
		: [];
	const [dealer] = mod.dealerOrgId
		? await db
				.select({
					id: organisations.id,
					name: organisations.name,
					email: organisations.contactEmail
				})
				.from(organisations)
				.where(eq(organisations.id, mod.dealerOrgId))
		: [];
	const stored = await db
		.select()
		.from(moduleEvents)
		.where(eq(moduleEvents.moduleId, mod.id))
		.orderBy(desc(moduleEvents.at), desc(moduleEvents.id));
	const events = [...stored, ...(await testEvents(db, mod.id))].sort(
		(a, b) => b.at.getTime() - a.at.getTime() || b.id - a.id
	);
	const [placement] = mod.systemId
		? await db
				.select({ systemId: systems.id, system: systems.name, siteId: sites.id, site: sites.name })
				.from(systems)
				.innerJoin(sites, eq(systems.siteId, sites.id))
				.where(eq(systems.id, mod.systemId))
		: [];
	const moduleClaims = await db
		.select({
			id: claims.id,
			reference: claims.reference,
			state: claims.state,
			filedAt: claims.filedAt
		})
		.from(claimModules)
		.innerJoin(claims, eq(claimModules.claimId, claims.id))
		.where(eq(claimModules.moduleId, mod.id))
		.orderBy(desc(claims.filedAt));
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
