/**
 * What a module's condition sentence needs beyond its row: the last factory test, a rework
 * waiting for its retest, an open service campaign, its replacement either way and its
 * scrapping, dated on the assembler's calendar.
 */
import { and, desc, eq, isNull, ne, sql } from 'drizzle-orm';
import { type Db } from '$lib/server/db';
import { campaignModules, campaigns, modules } from '$lib/server/db/schema';
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

/**
 * Everything the condition sentence needs beyond the module row, read in one statement of
 * scalar sub-selects (each a primary-key or index lookup): the last factory test, whether it
 * was reworked, the newest open campaign, and its replacement either way.
 */
async function factsRow(db: Db, moduleId: number) {
	const [row] = await db
		.select({
			// Written out: drizzle leaves column names unqualified inside a one-table select, and
			// each sub-select must name the outer `modules` row.
			lastTest: sql<string | null>`(SELECT json_array(f.tested_at, f.outcome) FROM factory_tests f
				WHERE f.module_id = modules.id ORDER BY f.tested_at DESC, f.id DESC LIMIT 1)`,
			reworked: sql<number | null>`(SELECT 1 FROM module_events e
				WHERE e.module_id = modules.id AND e.kind = 'reworked' LIMIT 1)`,
			campaign: sql<string | null>`(SELECT json_array(c.reference, c.title, c.remedy)
				FROM campaign_modules cm JOIN campaigns c ON c.id = cm.campaign_id
				WHERE cm.module_id = modules.id AND cm.state <> 'resolved' AND c.closed_at IS NULL
				ORDER BY c.id DESC LIMIT 1)`,
			replacedBy: sql<string | null>`(SELECT o.serial FROM claim_modules x
				JOIN modules o ON o.id = x.replacement_module_id WHERE x.module_id = modules.id LIMIT 1)`,
			replaces: sql<string | null>`(SELECT o.serial FROM claim_modules x
				JOIN modules o ON o.id = x.module_id WHERE x.replacement_module_id = modules.id LIMIT 1)`
		})
		.from(modules)
		.where(eq(modules.id, moduleId));
	return row;
}

/** What the condition sentence needs beyond the module row. */
export async function conditionFacts(
	db: Db,
	mod: Pick<
		ModuleRow,
		'id' | 'state' | 'scrappedAt' | 'scrapReason' | 'updatedAt' | 'lifecycleStatus'
	>
) {
	const facts = await factsRow(db, mod.id);
	const last = facts?.lastTest ? (JSON.parse(facts.lastTest) as [number, 'pass' | 'fail']) : null;
	const campaign = facts?.campaign
		? (JSON.parse(facts.campaign) as [string, string, string])
		: null;
	// Business dates are the assembler's calendar day, not the UTC day of the instant.
	const { timeZone } = await assemblerCalendar(db);
	return {
		lastTest: last ? { on: calendarDay(new Date(last[0]), timeZone), outcome: last[1] } : null,
		reworked: !!facts?.reworked && mod.state === 'built',
		campaign: campaign ? { reference: campaign[0], title: campaign[1], remedy: campaign[2] } : null,
		replacedBy: facts?.replacedBy ?? null,
		replaces: facts?.replaces ?? null,
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
