/**
 * Figures of the claims on the dashboard: how long open claims have waited, and how decided
 * claims came out month by month. Pure: the caller passes the rows, `now` and the time zone.
 */
import { TARGET_RESPONSE_DAYS } from './claim-workflow';
import { calendarDay } from './calendar';

const DAY_MS = 86_400_000;

/**
 * Age bands of open claims, by whole days since filing. The third band ends at the target
 * decision time, so the bars after it are the claims already past the target.
 */
export const AGE_BANDS = [
	{ upTo: 2, label: '0–2 days' },
	{ upTo: 7, label: '3–7 days' },
	{ upTo: TARGET_RESPONSE_DAYS, label: `8–${TARGET_RESPONSE_DAYS} days` },
	{ upTo: 30, label: `${TARGET_RESPONSE_DAYS + 1}–30 days` },
	{ upTo: Infinity, label: 'over 30 days' }
] as const;

/** Whole days a claim has waited: 0 until a full 24 hours have passed since it was filed. */
export function ageInDays(filedAt: Date, now: Date): number {
	return Math.max(0, Math.floor((now.getTime() - filedAt.getTime()) / DAY_MS));
}

export interface AgeBand {
	label: string;
	n: number;
	/** True for the bands past the target decision time. */
	late: boolean;
}

/** Open claims counted per age band (every band present, zero or not). */
export function openClaimAges(filed: readonly Date[], now: Date): AgeBand[] {
	const counts = AGE_BANDS.map(() => 0);
	for (const f of filed) {
		const age = ageInDays(f, now);
		counts[AGE_BANDS.findIndex((b) => age <= b.upTo)]++;
	}
	return AGE_BANDS.map((b, i) => ({
		label: b.label,
		n: counts[i],
		late: b.upTo > TARGET_RESPONSE_DAYS
	}));
}

/** `YYYY-MM` of an instant as the calendar shows it in `timeZone` (an IANA name). */
export function monthIn(d: Date, timeZone: string): string {
	return calendarDay(d, timeZone).slice(0, 7);
}

/** The `count` months ending with the one containing `now` in `timeZone`, oldest first. */
export function lastMonths(now: Date, timeZone: string, count: number): string[] {
	const [y, m] = monthIn(now, timeZone).split('-').map(Number);
	return Array.from({ length: count }, (_, i) => {
		const k = y * 12 + (m - 1) - (count - 1 - i);
		return `${Math.floor(k / 12)}-${String((k % 12) + 1).padStart(2, '0')}`;
	});
}

export interface MonthOutcome {
	month: string;
	covered: number;
	notCovered: number;
}

/** Decided claims per month of decision (in `timeZone`), for the `count` months up to `now`. */
export function outcomesByMonth(
	decided: readonly { decidedAt: Date; decision: 'covered' | 'not_covered' }[],
	now: Date,
	timeZone: string,
	count = 12
): MonthOutcome[] {
	const months = lastMonths(now, timeZone, count);
	const rows = new Map(months.map((month) => [month, { month, covered: 0, notCovered: 0 }]));
	for (const d of decided) {
		const row = rows.get(monthIn(d.decidedAt, timeZone));
		if (!row) continue;
		if (d.decision === 'covered') row.covered++;
		else row.notCovered++;
	}
	return months.map((m) => rows.get(m)!);
}
