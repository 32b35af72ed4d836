import { and, asc, desc, eq, isNull, like, ne, or } from 'drizzle-orm';
import { alias } from 'drizzle-orm/sqlite-core';
import type { Db } from '$lib/server/db';
import {
	campaignModules,
	campaigns,
	claimModules,
	claims,
	factoryTests,
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
import { toPublicRecord } from '$lib/domain/public-record';
import { factoryTestsOf } from './workshop';

type ModuleRow = typeof modules.$inferSelect;

/** Open service campaigns naming a module (its step not yet resolved), newest first. */
export async function openCampaignsOf(db: Db, moduleId: number) {
	return db
		.select({
			id: campaigns.id,
			reference: campaigns.reference,
			title: campaigns.title,
			remedy: campaigns.remedy,
			state: campaignModules.state
		})
		.from(campaignModules)
		.innerJoin(campaigns, eq(campaignModules.campaignId, campaigns.id))
		.where(
			and(
				eq(campaignModules.moduleId, moduleId),
				ne(campaignModules.state, 'resolved'),
				isNull(campaigns.closedAt)
			)
		)
		.orderBy(desc(campaigns.id));
}

/** Which module replaced this one under a claim, and which one this one replaced. */
async function replacementsOf(db: Db, moduleId: number) {
	const other = alias(modules, 'other');
	const [by] = await db
		.select({ serial: other.serial })
		.from(claimModules)
		.innerJoin(other, eq(claimModules.replacementModuleId, other.id))
		.where(eq(claimModules.moduleId, moduleId))
		.limit(1);
	const [of] = await db
		.select({ serial: other.serial })
		.from(claimModules)
		.innerJoin(other, eq(claimModules.moduleId, other.id))
		.where(eq(claimModules.replacementModuleId, moduleId))
		.limit(1);
	return { replacedBy: by?.serial ?? null, replaces: of?.serial ?? null };
}

/** What the condition sentence needs beyond the module row. */
async function conditionFacts(db: Db, mod: ModuleRow) {
	const [last] = await db
		.select({ testedAt: factoryTests.testedAt, outcome: factoryTests.outcome })
		.from(factoryTests)
		.where(eq(factoryTests.moduleId, mod.id))
		.orderBy(desc(factoryTests.testedAt), desc(factoryTests.id))
		.limit(1);
	const [rework] = await db
		.select({ at: moduleEvents.at })
		.from(moduleEvents)
		.where(and(eq(moduleEvents.moduleId, mod.id), eq(moduleEvents.kind, 'reworked')))
		.orderBy(desc(moduleEvents.at))
		.limit(1);
	const [campaign] = await openCampaignsOf(db, mod.id);
	return {
		lastTest: last ? { on: last.testedAt.toISOString().slice(0, 10), outcome: last.outcome } : null,
		reworked: !!rework && mod.state === 'built',
		campaign: campaign
			? { reference: campaign.reference, title: campaign.title, remedy: campaign.remedy }
			: null,
		...(await replacementsOf(db, mod.id)),
		scrapped:
			mod.state === 'scrapped'
				? {
						on: (mod.scrappedAt ?? mod.updatedAt ?? new Date(0)).toISOString().slice(0, 10),
						reason: mod.scrapReason ?? 'no reason recorded'
					}
				: null,
		lifecycleStatus: mod.lifecycleStatus
	};
}

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

/** The public record of a module: rated data, build month, warranty state, contact. No customer data. */
export async function getPublicRecord(db: Db, serialText: string, today: string) {
	const mod = await findModule(db, null, serialText);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, mod.modelId));
	const [assembler] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.kind, 'assembler'))
		.limit(1);
	const [dealer] = mod.dealerOrgId
		? await db.select().from(organisations).where(eq(organisations.id, mod.dealerOrgId))
		: [];
	return toPublicRecord({
		serial: mod.serial,
		model,
		builtAt: mod.builtAt,
		state: mod.state,
		warranty:
			mod.warrantyStartsOn && mod.warrantyEndsOn
				? { startsOn: mod.warrantyStartsOn, endsOn: mod.warrantyEndsOn }
				: null,
		assembler: { name: assembler?.name ?? 'The assembler', email: assembler?.contactEmail ?? null },
		dealer: dealer ? { name: dealer.name, email: dealer.contactEmail } : null,
		today,
		...(await conditionFacts(db, mod))
	});
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
	const events = await db
		.select()
		.from(moduleEvents)
		.where(eq(moduleEvents.moduleId, mod.id))
		.orderBy(desc(moduleEvents.at), desc(moduleEvents.id));
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
