/**
 * Service campaigns (recalls): from a traceability result or a list of serials to every
 * affected module, followed per dealer to an outcome. Dealers see and act on their own modules
 * only (the scope is in every query); reminders go to dealers with modules still waiting.
 */
import { and, asc, desc, eq, inArray, isNull, like, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	campaignModules,
	campaigns,
	campaignSteps,
	moduleModels,
	modules,
	organisations,
	users
} from '$lib/server/db/schema';
import { assertCan, dealerScopeOf, type Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	CAMPAIGN_OUTCOME_LABELS,
	campaignCounts,
	campaignStep,
	CampaignStepError,
	nextCampaignReference,
	reminderDue,
	type CampaignItemState
} from '$lib/domain/campaign';
import type { CampaignActionInput, OpenCampaignInput } from '$lib/schemas/campaign';
import { sendMail } from '$lib/server/mail';
import { recordAudit, recordEvent } from './audit';
import { findModule } from './modules';
import { describeTrace, traceModules } from './trace';

const OWN = 'Tidewater Cellworks (not shipped)';
const MAX_MODULES = 50_000;

/** The modules a campaign's selection names (scrapped modules need no remedy and are left out). */
async function selectedModules(db: Db, actor: Actor, select: OpenCampaignInput['select']) {
	if (select.serials?.length) {
		const found = [];
		for (const s of select.serials) found.push(await findModule(db, actor, s));
		return found
			.filter((m) => m.state !== 'scrapped')
			.map((m) => ({ id: m.id, serial: m.serial, dealerId: m.dealerOrgId }));
	}
	const { items, truncated } = await traceModules(db, {
		lot: select.lot,
		model: select.model,
		builtFrom: select.builtFrom,
		builtTo: select.builtTo,
		importId: select.importId
	});
	if (truncated || items.length > MAX_MODULES)
		throw new InvalidInputError(
			`More than ${MAX_MODULES} modules match; narrow the selection before opening a campaign.`
		);
	return items
		.filter((i) => i.state !== 'scrapped')
		.map((i) => ({ id: i.id, serial: i.serial, dealerId: i.dealerId }));
}

/** Mails each dealer of `items` one message listing its own serials. */
async function mailDealers(
	db: Db,
	items: { serial: string; dealerId: number | null }[],
	subject: string,
	body: string
) {
	const groups = new Map<number, string[]>();
	for (const i of items)
		if (i.dealerId !== null) groups.set(i.dealerId, [...(groups.get(i.dealerId) ?? []), i.serial]);
	if (!groups.size) return 0;
	const orgs = await db
		.select()
		.from(organisations)
		.where(inArray(organisations.id, [...groups.keys()]));
	for (const [dealerId, serials] of groups) {
		const org = orgs.find((o) => o.id === dealerId);
		if (!org?.contactEmail) continue;
		await sendMail(db, {
			to: org.contactEmail,
			subject,
			text: `${body}\n\nYour modules (${serials.length}):\n${serials.map((s) => `  ${s}`).join('\n')}\n\nWork on battery systems only by licensed electricians, isolated and locked off, with insulated tools and suitable PPE; local codes and installation standards take precedence.`
		});
	}
	return groups.size;
}

/**
 * Opens a campaign over the selected modules: each is notified, its dealer mailed its own
 * list, the step recorded on the module's timeline. A selection with no modules is refused
 * and nothing is stored.
 */
export async function openCampaign(
	db: Db,
	actor: Actor,
	input: OpenCampaignInput,
	now = new Date()
) {
	assertCan(actor, 'openCampaign', 'Service campaigns are opened by the assembler’s staff.');
	const picked = await selectedModules(db, actor, input.select);
	if (!picked.length)
		throw new InvalidInputError(
			'The selection names no modules (or only scrapped ones): a campaign needs at least one affected module.',
			[{ path: 'select', message: 'The selection names no modules.' }]
		);
	const criteria = input.select.serials?.length
		? `${input.select.serials.length} listed serials`
		: describeTrace(input.select);
	const row = await writeTx(db, async (tx) => {
		const [last] = await tx
			.select({ reference: campaigns.reference })
			.from(campaigns)
			.where(like(campaigns.reference, `SC-${now.getUTCFullYear()}-%`))
			.orderBy(desc(campaigns.reference))
			.limit(1);
		const [c] = await tx
			.insert(campaigns)
			.values({
				reference: nextCampaignReference(now.getUTCFullYear(), last?.reference ?? null),
				title: input.title,
				notice: input.notice,
				remedy: input.remedy,
				selection: JSON.stringify(input.select),
				reminderDays: input.reminderDays,
				createdBy: actor.userId!,
				createdAt: now
			})
			.returning();
		for (let i = 0; i < picked.length; i += 500) {
			const chunk = picked.slice(i, i + 500);
			await tx.insert(campaignModules).values(
				chunk.map((m) => ({
					campaignId: c.id,
					moduleId: m.id,
					dealerOrgId: m.dealerId,
					state: 'notified' as const,
					notifiedAt: now,
					lastStepAt: now,
					lastStepBy: actor.label
				}))
			);
			await tx.insert(campaignSteps).values(
				chunk.map((m) => ({
					campaignId: c.id,
					moduleId: m.id,
					action: 'notify' as const,
					actorUserId: actor.userId,
					actorLabel: actor.label,
					at: now
				}))
			);
		}
		for (const m of picked)
			await recordEvent(tx, actor, {
				moduleId: m.id,
				kind: 'campaign',
				summary: `Service campaign ${c.reference} opened: ${input.title}`,
				detail: { campaign: c.reference },
				at: now
			});
		await recordAudit(tx, actor, {
			action: 'campaign.open',
			entity: 'campaign',
			entityId: c.reference,
			after: {
				title: input.title,
				criteria,
				modules: picked.length,
				reminderDays: input.reminderDays
			},
			at: now
		});
		return c;
	});
	await mailDealers(
		db,
		picked,
		`Service campaign ${row.reference}: ${input.title}`,
		`${input.notice}\n\nRemedy: ${input.remedy}\n\nPlease acknowledge and resolve each module in Packledger under Campaigns → ${row.reference}.`
	);
	return { id: row.id, reference: row.reference, modules: picked.length };
}

/** The campaign if the actor may see it: a dealer only one naming its own modules. */
async function loadCampaign(db: Db, actor: Actor, id: number) {
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

const scoped = (actor: Actor, id: number) => {
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

/**
 * A person's step on one campaign module: acknowledge, resolve (with an outcome) or mark it
 * unreachable. A module of another dealer answers exactly like one not in the campaign.
 */
export async function actOnCampaignModule(
	db: Db,
	actor: Actor,
	id: number,
	serial: string,
	input: CampaignActionInput,
	now = new Date()
) {
	const c = await loadCampaign(db, actor, id);
	if (c.closedAt) throw new ConflictError(`Campaign ${c.reference} is closed.`);
	const notFound = new NotFoundError(
		`${serial.slice(0, 40)} is not on your list of campaign ${c.reference}.`
	);
	const mod = await findModule(db, actor, serial).catch((e) => {
		if (e instanceof NotFoundError) throw notFound;
		throw e;
	});
	const [item] = await db
		.select()
		.from(campaignModules)
		.where(and(scoped(actor, id), eq(campaignModules.moduleId, mod.id)));
	if (!item) throw notFound;
	let to: CampaignItemState;
	try {
		to = campaignStep(mod.serial, item.state, input.action, input.outcome ?? null);
	} catch (e) {
		if (e instanceof CampaignStepError)
			throw e.status === 400 ? new InvalidInputError(e.message) : new ConflictError(e.message);
		throw e;
	}
	const note = input.note?.trim() || null;
	await writeTx(db, async (tx) => {
		const done = await tx
			.update(campaignModules)
			.set({
				state: to,
				outcome: input.action === 'resolve' ? input.outcome : item.outcome,
				note: note ?? item.note,
				lastStepAt: now,
				lastStepBy: actor.label
			})
			.where(
				and(
					eq(campaignModules.campaignId, id),
					eq(campaignModules.moduleId, mod.id),
					eq(campaignModules.state, item.state)
				)
			)
			.returning({ id: campaignModules.moduleId });
		if (!done.length) throw new ConflictError(`${mod.serial} changed meanwhile; reload the page.`);
		await tx.insert(campaignSteps).values({
			campaignId: id,
			moduleId: mod.id,
			action: input.action,
			outcome: input.outcome ?? null,
			note,
			actorUserId: actor.userId,
			actorLabel: actor.label,
			at: now
		});
		const what =
			input.action === 'resolve'
				? `resolved: ${CAMPAIGN_OUTCOME_LABELS[input.outcome!].toLowerCase()}`
				: input.action === 'acknowledge'
					? 'acknowledged'
					: 'marked unreachable';
		await recordEvent(tx, actor, {
			moduleId: mod.id,
			kind: 'campaign',
			summary: `Service campaign ${c.reference} ${what}${note ? ` (${note})` : ''}`,
			detail: { campaign: c.reference, action: input.action, outcome: input.outcome ?? null },
			at: now
		});
		await recordAudit(tx, actor, {
			action: `campaign.${input.action}`,
			entity: 'campaign',
			entityId: c.reference,
			before: { serial: mod.serial, state: item.state },
			after: { serial: mod.serial, state: to, outcome: input.outcome ?? null, note },
			at: now
		});
	});
	return { serial: mod.serial, state: to, outcome: input.outcome ?? null };
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

/**
 * Sends the reminders that are due: each dealer with modules still waiting `reminderDays`
 * after their last step or reminder gets one message listing them.
 * @returns how many dealers were reminded of how many modules
 */
export async function sendDueReminders(db: Db, actor: Actor, now = new Date()) {
	assertCan(actor, 'openCampaign', 'Reminders are sent by the assembler’s staff.', {
		allowSystem: true
	});
	const open = await db.select().from(campaigns).where(isNull(campaigns.closedAt));
	let dealers = 0;
	let count = 0;
	for (const c of open) {
		const items = await db
			.select({ item: campaignModules, serial: modules.serial })
			.from(campaignModules)
			.innerJoin(modules, eq(campaignModules.moduleId, modules.id))
			.where(eq(campaignModules.campaignId, c.id));
		const due = items.filter(
			(i) => i.item.dealerOrgId !== null && reminderDue(i.item, c.reminderDays, now)
		);
		if (!due.length) continue;
		await writeTx(db, async (tx) => {
			for (const d of due) {
				await tx
					.update(campaignModules)
					.set({ lastReminderAt: now })
					.where(
						and(eq(campaignModules.campaignId, c.id), eq(campaignModules.moduleId, d.item.moduleId))
					);
				await tx.insert(campaignSteps).values({
					campaignId: c.id,
					moduleId: d.item.moduleId,
					action: 'remind',
					actorUserId: actor.userId,
					actorLabel: actor.label,
					at: now
				});
			}
			await recordAudit(tx, actor, {
				action: 'campaign.remind',
				entity: 'campaign',
				entityId: c.reference,
				after: { modules: due.length },
				at: now
			});
		});
		dealers += await mailDealers(
			db,
			due.map((d) => ({ serial: d.serial, dealerId: d.item.dealerOrgId })),
			`Reminder: service campaign ${c.reference}: ${c.title}`,
			`These modules of service campaign ${c.reference} still wait for you (${c.reminderDays} days or more since the last step).\n\n${c.notice}\n\nRemedy: ${c.remedy}`
		);
		count += due.length;
	}
	return { dealers, modules: count };
}
