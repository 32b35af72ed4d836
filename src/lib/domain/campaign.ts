/**
 * Service campaigns (recalls): how each affected module is followed, per dealer, from the
 * notice to an outcome, and the figures the campaign page shows. Pure: no database, no clock.
 *
 * A module's step: notified → acknowledged → resolved (with an outcome), or unreachable.
 * Resolving straight from notified is allowed (a dealer may remedy at once); an unreachable
 * module may still be resolved when it turns up. Acknowledging twice is refused.
 */

export const CAMPAIGN_ITEM_STATES = [
	'notified',
	'acknowledged',
	'resolved',
	'unreachable'
] as const;
export type CampaignItemState = (typeof CAMPAIGN_ITEM_STATES)[number];

export const CAMPAIGN_ITEM_LABELS: Record<CampaignItemState, string> = {
	notified: 'Notified',
	acknowledged: 'Acknowledged',
	resolved: 'Resolved',
	unreachable: 'Unreachable'
};

/** What a person does to a campaign module (and 'notify', 'remind' done by the register). */
export const CAMPAIGN_ACTIONS = [
	'notify',
	'acknowledge',
	'resolve',
	'unreachable',
	'remind'
] as const;
export type CampaignAction = (typeof CAMPAIGN_ACTIONS)[number];
/** The actions a person may ask for through the page or the API. */
export const PERSON_ACTIONS = ['acknowledge', 'resolve', 'unreachable'] as const;
export type PersonAction = (typeof PERSON_ACTIONS)[number];

export const CAMPAIGN_OUTCOMES = ['inspected_ok', 'reworked', 'replaced', 'not_found'] as const;
export type CampaignOutcome = (typeof CAMPAIGN_OUTCOMES)[number];

export const CAMPAIGN_OUTCOME_LABELS: Record<CampaignOutcome, string> = {
	inspected_ok: 'Inspected and fine',
	reworked: 'Reworked',
	replaced: 'Replaced',
	not_found: 'Not found'
};

/** Why a step is refused; services answer it as a conflict (409) or bad input (400). */
export class CampaignStepError extends Error {
	constructor(
		message: string,
		readonly status: 400 | 409 = 409
	) {
		super(message);
		this.name = 'CampaignStepError';
	}
}

const FROM: Record<PersonAction, readonly CampaignItemState[]> = {
	acknowledge: ['notified'],
	resolve: ['notified', 'acknowledged', 'unreachable'],
	unreachable: ['notified', 'acknowledged']
};
const TO: Record<PersonAction, CampaignItemState> = {
	acknowledge: 'acknowledged',
	resolve: 'resolved',
	unreachable: 'unreachable'
};

/**
 * The state after a person's action on a campaign module, or a CampaignStepError that says
 * what is wrong: resolving needs an outcome, and only resolving takes one.
 */
export function campaignStep(
	serial: string,
	state: CampaignItemState,
	action: PersonAction,
	outcome?: CampaignOutcome | null
): CampaignItemState {
	if (action === 'resolve' && !outcome)
		throw new CampaignStepError(
			`Say how ${serial} was resolved: ${CAMPAIGN_OUTCOMES.map((o) => CAMPAIGN_OUTCOME_LABELS[o].toLowerCase()).join(', ')}.`,
			400
		);
	if (action !== 'resolve' && outcome)
		throw new CampaignStepError('Only resolving a module takes an outcome.', 400);
	if (!FROM[action].includes(state)) {
		const already =
			action === 'acknowledge' && state === 'acknowledged'
				? `${serial} is already acknowledged.`
				: `${serial} is ${CAMPAIGN_ITEM_LABELS[state].toLowerCase()}: it cannot be marked ${TO[action]}.`;
		throw new CampaignStepError(already);
	}
	return TO[action];
}

/** A campaign module still waiting for its remedy (unreachable ones are not remedied either). */
export const isOpenItem = (state: CampaignItemState) => state !== 'resolved';
/** A module a dealer is still expected to act on (reminders go to these). */
export const awaitsAction = (state: CampaignItemState) =>
	state === 'notified' || state === 'acknowledged';

export interface CampaignCounts {
	total: number;
	notified: number;
	acknowledged: number;
	resolved: number;
	unreachable: number;
	/** Resolved modules as a percentage of all affected modules, one decimal. */
	completionPct: number;
}

/**
 * Counts by state and the completion: resolved ÷ affected. Unreachable modules count as not
 * complete, since they were not remedied (completion rate as recall follow-up reports state
 * it: remedied units over affected units — common practice).
 */
export function campaignCounts(states: readonly CampaignItemState[]): CampaignCounts {
	const c = { total: states.length, notified: 0, acknowledged: 0, resolved: 0, unreachable: 0 };
	for (const s of states) c[s]++;
	const completionPct = c.total ? Math.round((c.resolved / c.total) * 1000) / 10 : 0;
	return { ...c, completionPct };
}

/**
 * Whether a reminder is due for a module still awaiting action: `reminderDays` whole days
 * (of 24 h) since its last step or last reminder, whichever is later.
 */
export function reminderDue(
	item: { state: CampaignItemState; lastStepAt: Date; lastReminderAt: Date | null },
	reminderDays: number,
	now: Date
): boolean {
	if (!awaitsAction(item.state)) return false;
	const since = Math.max(item.lastStepAt.getTime(), item.lastReminderAt?.getTime() ?? 0);
	return now.getTime() - since >= reminderDays * 86_400_000;
}

/** SC-{year}-{NNN}: the campaign reference after the last one of the year. */
export function nextCampaignReference(year: number, last: string | null): string {
	const prefix = `SC-${year}-`;
	const n = last?.startsWith(prefix) ? Number(last.slice(prefix.length)) + 1 : 1;
	return prefix + String(n).padStart(3, '0');
}
