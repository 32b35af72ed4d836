import { and, desc, eq, like, or, sql } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx, type TxHook } from '$lib/server/db';
import { moduleModels, organisations, sites, systems, systemSlots } from '$lib/server/db/schema';
import { assertCan, dealerScopeOf, type Actor } from '$lib/server/actor';
import { ForbiddenError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import type { SiteInput } from '$lib/schemas/site';
import { recordAudit } from './audit';

type Conn = Db | Tx;
export type SiteRow = typeof sites.$inferSelect;
/** No system yet, at least one system still being installed, or every system in service. */
export type SiteStatus = 'no_systems' | 'planned' | 'commissioned';

const NO_SITE = (id: unknown) => `There is no site number ${String(id).slice(0, 12)}.`;

/** Refuses anyone without the `install` capability (the routes check it too); the seed may. */
export function assertMayChangeSites(actor: Actor): void {
	assertCan(
		actor,
		'install',
		'Only field technicians and administrators record sites, systems and installed modules.',
		{ allowSystem: true }
	);
}

/** Where-clause limiting sites to the actor's dealer organisation (none for the assembler's staff). */
export function siteScope(actor: Actor) {
	const scope = dealerScopeOf(actor);
	return scope === null ? undefined : eq(sites.dealerOrgId, scope);
}

/**
 * Owner name, contact and address are personal data: only the site's own dealer and the
 * assembler's staff get them. After scoping that is everyone who can see the site, but the
 * rule is kept here so a wider view later cannot leak them by accident.
 */
export function maySeeOwner(actor: Actor, site: Pick<SiteRow, 'dealerOrgId'>): boolean {
	if (actor.role === 'rig') return false;
	return actor.dealerScoped
		? site.dealerOrgId !== null && site.dealerOrgId === actor.organisationId
		: true;
}

/** A site the actor may see; another dealer's site answers exactly like a missing one. */
export async function findSite(conn: Conn, actor: Actor, id: number): Promise<SiteRow> {
	if (!Number.isSafeInteger(id) || id < 1) throw new NotFoundError(NO_SITE(id));
	const [row] = await conn
		.select()
		.from(sites)
		.where(and(eq(sites.id, id), siteScope(actor)));
	if (!row) throw new NotFoundError(NO_SITE(id));
	return row;
}

/** A dealer organisation's name, or null for none. */
export async function dealerName(conn: Conn, orgId: number | null): Promise<string | null> {
	if (orgId === null) return null;
	const [org] = await conn
		.select({ name: organisations.name })
		.from(organisations)
		.where(eq(organisations.id, orgId));
	return org?.name ?? null;
}

/**
 * What the new-site form offers: the dealers an assembler's staff member may file a site
 * under, or, for a dealer's people, just the name of their own organisation (always used).
 */
export async function siteFormOptions(db: Db, actor: Actor) {
	if (actor.dealerScoped)
		return { dealers: [], ownDealer: await dealerName(db, actor.organisationId) };
	const dealers = await db
		.select({ id: organisations.id, name: organisations.name })
		.from(organisations)
		.where(and(eq(organisations.kind, 'dealer'), eq(organisations.active, true)))
		.orderBy(organisations.name);
	return { dealers, ownDealer: null };
}

/**
 * Records a site. A dealer's people always file it under their own organisation, whatever
 * the form says; the assembler's staff choose the dealer, or none for an installation of
 * their own. Owner data is kept out of the append-only audit log so it can be erased later.
 */
export async function createSite(
	db: Db,
	actor: Actor,
	input: SiteInput,
	now = new Date(),
	/** Run inside this use case's own write transaction (the sync endpoint records its operation so). */
	hook?: TxHook
): Promise<number> {
	assertMayChangeSites(actor);
	if (actor.userId === null)
		throw new ForbiddenError(
			'A site is recorded by a signed-in person, so the register shows who recorded it.'
		);
	const createdBy = actor.userId;
	let dealerOrgId: number | null = null;
	if (actor.dealerScoped) dealerOrgId = actor.organisationId;
	else if (input.dealerOrgId != null) {
		const [org] = await db
			.select()
			.from(organisations)
			.where(eq(organisations.id, input.dealerOrgId));
		if (!org || org.kind !== 'dealer' || !org.active) {
			const message = 'Choose one of the listed dealers, or none for our own installation.';
			throw new InvalidInputError(message, [{ path: 'dealerOrgId', message }]);
		}
		dealerOrgId = org.id;
	}
	return writeTx(
		db,
		async (tx) => {
			const [row] = await tx
				.insert(sites)
				.values({
					dealerOrgId,
					name: input.name,
					ownerName: input.ownerName,
					ownerContact: input.ownerContact,
					address: input.address,
					application: input.application,
					climateBand: input.climateBand ?? null,
					createdBy,
					createdAt: now
				})
				.returning({ id: sites.id });
			await recordAudit(tx, actor, {
				action: 'site.create',
				entity: 'site',
				entityId: row.id,
				after: {
					name: input.name,
					application: input.application,
					climateBand: input.climateBand ?? null,
					dealerOrgId
				},
				at: now
			});
			return row.id;
		},
		hook
	);
}

const statusOf = (total: number, commissioned: number): SiteStatus =>
	total === 0 ? 'no_systems' : commissioned === total ? 'commissioned' : 'planned';

/** Sites the actor may see, newest first, with their systems counted; `q` matches name, address or owner. */
export async function listSites(db: Db, actor: Actor, opts: { q?: string; limit?: number } = {}) {
	const q = opts.q?.trim();
	const search = q
		? or(like(sites.name, `%${q}%`), like(sites.address, `%${q}%`), like(sites.ownerName, `%${q}%`))
		: undefined;
	const rows = await db
		.select({
			id: sites.id,
			name: sites.name,
			application: sites.application,
			dealerOrgId: sites.dealerOrgId,
			dealerName: organisations.name,
			ownerName: sites.ownerName,
			address: sites.address,
			createdAt: sites.createdAt,
			systemCount: sql<number>`count(${systems.id})`,
			commissionedCount: sql<number>`coalesce(sum(case when ${systems.status} = 'commissioned' then 1 else 0 end), 0)`
		})
		.from(sites)
		.leftJoin(organisations, eq(organisations.id, sites.dealerOrgId))
		.leftJoin(systems, eq(systems.siteId, sites.id))
		.where(and(siteScope(actor), search))
		.groupBy(sites.id)
		.orderBy(desc(sites.createdAt), desc(sites.id))
		.limit(opts.limit ?? 200);
	return rows.map(({ ownerName, address, ...r }) => ({
		...r,
		status: statusOf(r.systemCount, r.commissionedCount),
		owner: maySeeOwner(actor, r) ? { name: ownerName, address } : null
	}));
}

/** One site with its dealer, owner block (when allowed) and systems with how many slots are filled. */
export async function getSite(db: Db, actor: Actor, id: number) {
	const site = await findSite(db, actor, id);
	const list = await db
		.select({
			id: systems.id,
			name: systems.name,
			status: systems.status,
			series: systems.series,
			parallel: systems.parallel,
			inverterName: systems.inverterName,
			modelCode: moduleModels.code,
			filled: sql<number>`(select count(*) from ${systemSlots} where ${systemSlots.systemId} = ${systems.id})`
		})
		.from(systems)
		.innerJoin(moduleModels, eq(moduleModels.id, systems.modelId))
		.where(eq(systems.siteId, site.id))
		.orderBy(systems.id);
	return {
		site: {
			id: site.id,
			name: site.name,
			application: site.application,
			dealerOrgId: site.dealerOrgId,
			dealerName: await dealerName(db, site.dealerOrgId),
			createdAt: site.createdAt
		},
		owner: maySeeOwner(actor, site)
			? { name: site.ownerName, contact: site.ownerContact, address: site.address }
			: null,
		systems: list.map((s) => ({ ...s, total: s.series * s.parallel })),
		status: statusOf(list.length, list.filter((s) => s.status === 'commissioned').length)
	};
}
