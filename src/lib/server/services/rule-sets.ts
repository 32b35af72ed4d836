import { and, asc, desc, eq, lte } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { commissioningRuleSets, organisations } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import {
	DEFAULT_COMMISSIONING_CITATIONS,
	DEFAULT_COMMISSIONING_LIMITS,
	DEFAULT_RULE_SET,
	type CommissioningRuleSet
} from '$lib/domain/commissioning';
import type { RuleSetInput } from '$lib/schemas/rule-set';
import { recordAudit } from './audit';

type Conn = Db | Tx;
type Row = typeof commissioningRuleSets.$inferSelect;

export interface StoredRuleSet extends CommissioningRuleSet {
	id: number;
	createdAt: Date;
}

/** A stored version as the domain takes it; limits missing from an older version fall back to the defaults. */
function toRuleSet(row: Row): StoredRuleSet {
	return {
		id: row.id,
		market: row.market,
		name: row.name,
		version: row.version,
		effectiveFrom: row.effectiveFrom,
		limits: { ...DEFAULT_COMMISSIONING_LIMITS, ...JSON.parse(row.limits) },
		citations: { ...DEFAULT_COMMISSIONING_CITATIONS, ...JSON.parse(row.citations) },
		createdAt: row.createdAt
	};
}

function assertAdmin(actor: Actor) {
	assertCan(
		actor,
		'manageRuleSets',
		'Only an administrator maintains the commissioning rule sets.'
	);
}

/** The default set, version 1, stored the first time anything asks for a rule set. */
async function ensureDefault(db: Db): Promise<void> {
	const [any] = await db
		.select({ id: commissioningRuleSets.id })
		.from(commissioningRuleSets)
		.where(eq(commissioningRuleSets.market, 'default'))
		.limit(1);
	if (any) return;
	await writeTx(db, async (tx) => {
		const [again] = await tx
			.select({ id: commissioningRuleSets.id })
			.from(commissioningRuleSets)
			.where(eq(commissioningRuleSets.market, 'default'))
			.limit(1);
		if (again) return;
		await tx.insert(commissioningRuleSets).values({
			market: 'default',
			name: DEFAULT_RULE_SET.name,
			version: 1,
			effectiveFrom: DEFAULT_RULE_SET.effectiveFrom,
			limits: JSON.stringify(DEFAULT_RULE_SET.limits),
			citations: JSON.stringify(DEFAULT_RULE_SET.citations)
		});
	});
}

async function latestInForce(conn: Conn, market: string, day: string): Promise<Row | undefined> {
	const [row] = await conn
		.select()
		.from(commissioningRuleSets)
		.where(
			and(eq(commissioningRuleSets.market, market), lte(commissioningRuleSets.effectiveFrom, day))
		)
		.orderBy(desc(commissioningRuleSets.effectiveFrom), desc(commissioningRuleSets.version))
		.limit(1);
	return row;
}

/**
 * The rule set a commissioning on `day` (ISO calendar day) is judged by: the newest version
 * in force that day for the market of the site's organisation, else the default set's.
 */
export async function ruleSetInForce(
	db: Db,
	siteOrgId: number | null,
	day: string
): Promise<StoredRuleSet> {
	await ensureDefault(db);
	let market: string | null = null;
	const [org] = siteOrgId
		? await db
				.select({ market: organisations.market })
				.from(organisations)
				.where(eq(organisations.id, siteOrgId))
		: await db
				.select({ market: organisations.market })
				.from(organisations)
				.where(eq(organisations.kind, 'assembler'))
				.limit(1);
	market = org?.market ?? null;
	const row =
		(market ? await latestInForce(db, market, day) : undefined) ??
		(await latestInForce(db, 'default', day)) ??
		// Every default version starts later than the day: take the first one.
		(
			await db
				.select()
				.from(commissioningRuleSets)
				.where(eq(commissioningRuleSets.market, 'default'))
				.orderBy(asc(commissioningRuleSets.version))
				.limit(1)
		)[0];
	return toRuleSet(row);
}

/** One stored version by id (a commissioning's own), for its certificate. */
export async function ruleSetById(conn: Conn, id: number): Promise<StoredRuleSet> {
	const [row] = await conn
		.select()
		.from(commissioningRuleSets)
		.where(eq(commissioningRuleSets.id, id));
	if (!row) throw new NotFoundError(`Rule set ${id} is not in the register.`);
	return toRuleSet(row);
}

/** Every market with its versions (newest first) and the dealers assigned to it; admin only. */
export async function listRuleSets(db: Db, actor: Actor) {
	assertAdmin(actor);
	await ensureDefault(db);
	const rows = await db
		.select()
		.from(commissioningRuleSets)
		.orderBy(asc(commissioningRuleSets.market), desc(commissioningRuleSets.version));
	const dealers = await db
		.select({ id: organisations.id, name: organisations.name, market: organisations.market })
		.from(organisations)
		.where(eq(organisations.kind, 'dealer'))
		.orderBy(asc(organisations.name));
	const markets = [...new Set(rows.map((r) => r.market))];
	return {
		markets: markets.map((market) => ({
			market,
			versions: rows.filter((r) => r.market === market).map(toRuleSet)
		})),
		dealers
	};
}

/** The newest version of a market, to prefill the form; the default set's when the market is new. */
export async function latestRuleSet(db: Db, actor: Actor, market: string): Promise<StoredRuleSet> {
	assertAdmin(actor);
	await ensureDefault(db);
	const [row] = await db
		.select()
		.from(commissioningRuleSets)
		.where(eq(commissioningRuleSets.market, market))
		.orderBy(desc(commissioningRuleSets.version))
		.limit(1);
	if (row) return toRuleSet(row);
	return ruleSetInForce(db, null, '9999-12-31');
}

/** Adds the next version of a market's rule set (version 1 for a new market), audited. */
export async function addRuleSetVersion(
	db: Db,
	actor: Actor,
	input: RuleSetInput,
	now = new Date()
): Promise<StoredRuleSet> {
	assertAdmin(actor);
	return writeTx(db, async (tx) => {
		const [last] = await tx
			.select({ version: commissioningRuleSets.version })
			.from(commissioningRuleSets)
			.where(eq(commissioningRuleSets.market, input.market))
			.orderBy(desc(commissioningRuleSets.version))
			.limit(1);
		const version = (last?.version ?? 0) + 1;
		const [row] = await tx
			.insert(commissioningRuleSets)
			.values({
				market: input.market,
				name: input.name,
				version,
				effectiveFrom: input.effectiveFrom,
				limits: JSON.stringify(input.limits),
				citations: JSON.stringify(input.citations),
				createdBy: actor.userId,
				createdAt: now
			})
			.returning();
		await recordAudit(tx, actor, {
			action: 'rule_set.version',
			entity: 'commissioning_rule_set',
			entityId: `${input.market}/v${version}`,
			after: { ...input, version },
			at: now
		});
		return toRuleSet(row);
	});
}

/** Assigns a dealer to a market (null = the default set), audited. */
export async function setDealerMarket(
	db: Db,
	actor: Actor,
	dealerOrgId: number,
	market: string | null,
	now = new Date()
): Promise<void> {
	assertAdmin(actor);
	await writeTx(db, async (tx) => {
		const [org] = await tx
			.select()
			.from(organisations)
			.where(and(eq(organisations.id, dealerOrgId), eq(organisations.kind, 'dealer')));
		if (!org) throw new NotFoundError(`There is no dealer ${dealerOrgId}.`);
		if (market !== null) {
			const [known] = await tx
				.select({ id: commissioningRuleSets.id })
				.from(commissioningRuleSets)
				.where(eq(commissioningRuleSets.market, market))
				.limit(1);
			if (!known)
				throw new NotFoundError(
					`There is no rule set for the market “${market}”. Add its first version, then assign dealers to it.`
				);
		}
		await tx.update(organisations).set({ market }).where(eq(organisations.id, org.id));
		await recordAudit(tx, actor, {
			action: 'dealer.market',
			entity: 'organisation',
			entityId: org.id,
			before: { market: org.market },
			after: { market },
			at: now
		});
	});
}

/** What the admin's rule set page shows: every market and version, the dealers' markets, and the form prefilled from `market`. */
export async function ruleSetsPage(db: Db, actor: Actor, market: string | null) {
	const listed = await listRuleSets(db, actor);
	const chosen = market && listed.markets.some((m) => m.market === market) ? market : 'default';
	return { ...listed, form: await latestRuleSet(db, actor, chosen) };
}
