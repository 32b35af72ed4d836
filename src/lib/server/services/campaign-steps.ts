/** The steps of a campaign module: acknowledged, resolved with an outcome, or unreachable. */
import { and, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { campaignModules, campaignSteps } from '$lib/server/db/schema';
import { type Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	CAMPAIGN_OUTCOME_LABELS,
	campaignStep,
	CampaignStepError,
	type CampaignItemState
} from '$lib/domain/campaign';
import type { CampaignActionInput } from '$lib/schemas/campaign';
import { recordAudit, recordEvent } from './audit';
import { findModule } from './modules';
import { loadCampaign, scoped } from './campaigns';

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
