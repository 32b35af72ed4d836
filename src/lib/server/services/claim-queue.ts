/** The claims queue: filters (state, dealer, model, age, serial), sorting, paging, scope. */
import { and, asc, count, desc, eq, lte, sql, type SQL } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { claims, moduleModels, organisations } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import {
	AWAITING_DECISION,
	CLAIM_STATE_LABELS,
	TARGET_RESPONSE_DAYS,
	type ClaimQuery
} from '$lib/schemas/claim';
const DAY_MS = 86_400_000;

const modelsOf = sql<
	string | null
>`(SELECT group_concat(DISTINCT mm.code) FROM claim_modules cm JOIN modules m ON m.id = cm.module_id JOIN module_models mm ON mm.id = m.model_id WHERE cm.claim_id = ${claims.id})`;
const serialCountOf = sql<number>`(SELECT count(*) FROM claim_modules cm WHERE cm.claim_id = ${claims.id})`;

/**
 * The claims queue, oldest claim first unless sorted otherwise: filters by state,
 * dealer, model, minimum age and serial (exact or its beginning); a dealer's people see their organisation's claims only
 * (a dealer filter from them is ignored). Each item says whether it is past the
 * response-time target ({@link TARGET_RESPONSE_DAYS} calendar days to a decision).
 */
export async function listClaims(
	db: Db,
	actor: Actor,
	q: Partial<ClaimQuery> = {},
	now = new Date()
) {
	const page = q.page ?? 1;
	const pageSize = Math.min(q.pageSize ?? 25, 100);
	const scope = dealerScopeOf(actor);
	const where: SQL[] = [];
	if (scope !== null) where.push(eq(claims.dealerOrgId, scope));
	else if (q.dealer) where.push(eq(claims.dealerOrgId, q.dealer));
	if (q.state) where.push(eq(claims.state, q.state));
	if (q.model)
		where.push(
			sql`EXISTS (SELECT 1 FROM claim_modules cm JOIN modules m ON m.id = cm.module_id JOIN module_models mm ON mm.id = m.model_id WHERE cm.claim_id = ${claims.id} AND mm.code = ${q.model})`
		);
	// Exact or prefix: the schema allows only letters, digits and hyphens, so the text holds
	// no LIKE wildcard; the serial index answers a prefix LIKE (case-sensitive LIKE below).
	if (q.serial)
		where.push(
			sql`EXISTS (SELECT 1 FROM claim_modules cm JOIN modules m ON m.id = cm.module_id WHERE cm.claim_id = ${claims.id} AND (m.serial = ${q.serial} OR substr(m.serial, 1, ${q.serial.length}) = ${q.serial}))`
		);
	if (q.minAgeDays)
		where.push(lte(claims.filedAt, new Date(now.getTime() - q.minAgeDays * DAY_MS)));
	const cond = where.length ? and(...where) : undefined;

	const dir = q.dir === 'desc' ? desc : asc;
	const sortCol = {
		reference: claims.reference,
		state: claims.state,
		dealer: organisations.name,
		models: modelsOf,
		serialCount: serialCountOf,
		filedAt: claims.filedAt
	}[q.sort ?? 'filedAt'];
	const [{ total }] = await db.select({ total: count() }).from(claims).where(cond);
	const rows = await db
		.select({
			id: claims.id,
			reference: claims.reference,
			state: claims.state,
			fault: claims.fault,
			dealer: organisations.name,
			models: modelsOf,
			serialCount: serialCountOf,
			filedAt: claims.filedAt
		})
		.from(claims)
		.leftJoin(organisations, eq(claims.dealerOrgId, organisations.id))
		.where(cond)
		.orderBy(dir(sortCol), dir(claims.id))
		.limit(pageSize)
		.offset((page - 1) * pageSize);
	const items = rows.map((r) => {
		const ageMs = now.getTime() - r.filedAt.getTime();
		return {
			...r,
			stateLabel: CLAIM_STATE_LABELS[r.state],
			dealer: r.dealer ?? 'Tidewater Cellworks (own site)',
			models: r.models ? r.models.split(',') : [],
			serialCount: Number(r.serialCount),
			filedAt: r.filedAt.toISOString(),
			ageDays: Math.floor(ageMs / DAY_MS),
			overdue: AWAITING_DECISION.includes(r.state) && ageMs > TARGET_RESPONSE_DAYS * DAY_MS
		};
	});
	return { items, total, page, pageSize };
}

/** The choices of the queue's filters: dealers (staff only) and models. */
export async function claimFilterOptions(db: Db, actor: Actor) {
	const dealers = actor.dealerScoped
		? []
		: await db
				.select({ id: organisations.id, name: organisations.name })
				.from(organisations)
				.where(eq(organisations.kind, 'dealer'))
				.orderBy(asc(organisations.name));
	const models = (
		await db.select({ code: moduleModels.code }).from(moduleModels).orderBy(asc(moduleModels.code))
	).map((m) => m.code);
	return { dealers, models };
}
