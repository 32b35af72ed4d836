/**
 * What a module's condition sentence needs beyond its row: the last factory test, a rework
 * waiting for its retest, an open service campaign, its replacement either way and its
 * scrapping, dated on the assembler's calendar.
 */
import { and, desc, eq, isNull, ne } from 'drizzle-orm';
import { type Db } from '$lib/server/db';
import { alias } from 'drizzle-orm/sqlite-core';
import {
	campaignModules,
	campaigns,
	claimModules,
	factoryTests,
	moduleEvents,
	modules
} from '$lib/server/db/schema';
import { assemblerCalendar } from './calendar';
import { calendarDay } from '$lib/domain/calendar';

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
export async function conditionFacts(
	db: Db,
	mod: Pick<
		ModuleRow,
		'id' | 'state' | 'scrappedAt' | 'scrapReason' | 'updatedAt' | 'lifecycleStatus'
	>
) {
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
	// Business dates are the assembler's calendar day, not the UTC day of the instant.
	const { timeZone } = await assemblerCalendar(db);
	return {
		lastTest: last ? { on: calendarDay(last.testedAt, timeZone), outcome: last.outcome } : null,
		reworked: !!rework && mod.state === 'built',
		campaign: campaign
			? { reference: campaign.reference, title: campaign.title, remedy: campaign.remedy }
			: null,
		...(await replacementsOf(db, mod.id)),
		scrapped:
			mod.state === 'scrapped'
				? {
						on: calendarDay(mod.scrappedAt ?? mod.updatedAt ?? new Date(0), timeZone),
						reason: mod.scrapReason ?? 'no reason recorded'
					}
				: null,
		lifecycleStatus: mod.lifecycleStatus
	};
}
