/** Reminders to dealers whose campaign modules still wait after the campaign's set days. */
import { and, eq, isNull } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { campaignModules, campaigns, campaignSteps, modules } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { reminderDue } from '$lib/domain/campaign';
import { recordAudit } from './audit';
import { mailDealers } from './campaign-opening';

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
