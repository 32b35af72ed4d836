/**
 * Opening a service campaign (recall): the modules its selection names (a traceability
 * result or a list of serials), one step and timeline entry per module, and one notice per
 * dealer naming its own modules.
 */
import { desc, inArray, like } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { campaignModules, campaigns, campaignSteps, organisations } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { InvalidInputError } from '$lib/server/errors';
import { nextCampaignReference } from '$lib/domain/campaign';
import type { OpenCampaignInput } from '$lib/schemas/campaign';
import { sendMail } from '$lib/server/mail';
import { recordAudit, recordEvent } from './audit';
import { findModule } from './modules';
import { describeTrace, traceModules } from './trace';

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
export async function mailDealers(
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
