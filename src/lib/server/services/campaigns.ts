/**
 * Service campaigns (recalls) as people read them: one campaign with completion overall and
 * per dealer, its modules, and the list. Dealers see their own modules only (the scope is in
 * every query). Opening (campaign-opening), the steps (campaign-steps) and the reminders
 * (campaign-reminders) live beside it.
 */
import { and, asc, desc, eq, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	campaignModules,
	campaigns,
	moduleModels,
	modules,
	organisations,
	users
} from '$lib/server/db/schema';
import { assertCan, dealerScopeOf, type Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import {
	CAMPAIGN_OUTCOME_LABELS,
	campaignCounts,
	type CampaignItemState
} from '$lib/domain/campaign';

const OWN = 'Tidewater Cellworks (not shipped)';
/** The campaign if the actor may see it: a dealer only one naming its own modules. */
export async function loadCampaign(db: Db, actor: Actor, id: number) {
	assertCan(
		actor,
		'followCampaigns',
		'Service campaigns are for the assembler’s staff and dealers.'
	);
	const notFound = new NotFoundError(`Campaign #${id} is not in the register.`);
	if (!Number.isInteger(id) || id < 1) throw notFound;
	const [c] = await db.select().from(campaigns).where(eq(campaigns.id, id));
	if (!c) throw notFound;
	const scope = dealerScopeOf(actor);
	if (scope !== null) {
		const [own] = await db
			.select({ id: campaignModules.moduleId })
			.from(campaignModules)
			.where(and(eq(campaignModules.campaignId, id), eq(campaignModules.dealerOrgId, scope)))
			.limit(1);
		if (!own) throw notFound;
	}
	return c;
}

export const scoped = (actor: Actor, id: number) => {
	const scope = dealerScopeOf(actor);
	return and(
		eq(campaignModules.campaignId, id),
		scope === null ? undefined : eq(campaignModules.dealerOrgId, scope)
	);
};

/** A campaign with its completion overall and per dealer (a dealer sees its own part only). */
export async function getCampaign(db: Db, actor: Actor, id: number) {
	const c = await loadCampaign(db, actor, id);
	const rows = await db
		.select({
			state: campaignModules.state,
			dealerId: campaignModules.dealerOrgId,
			dealer: organisations.name
		})
		.from(campaignModules)
		.leftJoin(organisations, eq(campaignModules.dealerOrgId, organisations.id))
		.where(scoped(actor, id));
	const counts = campaignCounts(rows.map((r) => r.state));
	const byDealer = new Map<
		string,
		{ dealerId: number | null; dealer: string; states: CampaignItemState[] }
	>();
	for (const r of rows) {
		const key = r.dealer ?? OWN;
		const e = byDealer.get(key) ?? { dealerId: r.dealerId, dealer: key, states: [] };
		e.states.push(r.state);
		byDealer.set(key, e);
	}
	const [creator] = await db
		.select({ name: users.name })
		.from(users)
		.where(eq(users.id, c.createdBy));
	return {
		id: c.id,
		reference: c.reference,
		title: c.title,
		notice: c.notice,
		remedy: c.remedy,
		selection: JSON.parse(c.selection),
		reminderDays: c.reminderDays,
		createdAt: c.createdAt.toISOString(),
		createdBy: creator?.name ?? null,
		closedAt: c.closedAt?.toISOString() ?? null,
		...counts,
		dealers: [...byDealer.values()]
			.map((d) => ({ dealerId: d.dealerId, dealer: d.dealer, ...campaignCounts(d.states) }))
			.sort((a, b) => a.dealer.localeCompare(b.dealer))
	};
}

/** The campaign's modules the actor may see, with each one's step, who made it and when. */
export async function listCampaignModules(db: Db, actor: Actor, id: number) {
	await loadCampaign(db, actor, id);
	const rows = await db
		.select({
			serial: modules.serial,
			model: moduleModels.code,
			moduleState: modules.state,
			dealer: organisations.name,
			state: campaignModules.state,
			outcome: campaignModules.outcome,
			note: campaignModules.note,
			lastStepAt: campaignModules.lastStepAt,
			lastStepBy: campaignModules.lastStepBy
		})
		.from(campaignModules)
		.innerJoin(modules, eq(campaignModules.moduleId, modules.id))
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.leftJoin(organisations, eq(campaignModules.dealerOrgId, organisations.id))
		.where(scoped(actor, id))
		.orderBy(asc(organisations.name), asc(modules.serial));
	return {
		items: rows.map((r) => ({
			...r,
			dealer: r.dealer ?? OWN,
			outcomeLabel: r.outcome ? CAMPAIGN_OUTCOME_LABELS[r.outcome] : null,
			lastStepAt: r.lastStepAt.toISOString()
		}))
	};
}
/** The campaigns the actor may see, newest first, with completion (a dealer's own part). */
export async function listCampaigns(db: Db, actor: Actor) {
	assertCan(
		actor,
		'followCampaigns',
		'Service campaigns are for the assembler’s staff and dealers.'
	);
	const scope = dealerScopeOf(actor);
	const rows = await db
		.select({
			id: campaigns.id,
			reference: campaigns.reference,
			title: campaigns.title,
			createdAt: campaigns.createdAt,
			total: sql<number>`count(*)`,
			resolved: sql<number>`sum(${campaignModules.state} = 'resolved')`
		})
		.from(campaigns)
		.innerJoin(campaignModules, eq(campaignModules.campaignId, campaigns.id))
		.where(scope === null ? undefined : eq(campaignModules.dealerOrgId, scope))
		.groupBy(campaigns.id)
		.orderBy(desc(campaigns.id));
	return rows.map((r) => ({
		...r,
		total: Number(r.total),
		resolved: Number(r.resolved),
		completionPct: Math.round((Number(r.resolved) / Number(r.total)) * 1000) / 10
	}));
}
