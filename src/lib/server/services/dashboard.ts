import { and, gte, inArray, isNotNull, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { claims } from '$lib/server/db/schema';
import { AWAITING_DECISION } from '$lib/domain/claim-workflow';
import { openClaimAges, outcomesByMonth } from '$lib/domain/claim-figures';
import { tzOffset } from '@date-fns/tz';
import {
	addCalendarDays,
	calendarDay,
	mondayOfDay,
	startOfCalendarDay
} from '$lib/domain/calendar';
import { assemblerCalendar } from './calendar';

export const DASHBOARD_WEEKS = 12;

/** Monday of the week `weeksAgo` weeks before the one containing `now`, on the calendar of `timeZone`. */
export function mondayOf(now: Date, weeksAgo = 0, timeZone = 'UTC'): string {
	return addCalendarDays(mondayOfDay(calendarDay(now, timeZone)), -7 * weeksAgo);
}

/**
 * The assembler's overview: modules by state and by model, builds and shipments per
 * week (Monday-based weeks of the assembler's calendar) over the last twelve weeks.
 * Aggregates run in SQLite, which knows no time zones: instants are shifted by the zone's
 * offset now (exact for fixed zones such as Etc/GMT-10; across a daylight-saving change a
 * row within an hour of midnight may land in the neighbouring week).
 */
export async function dashboardFigures(db: Db, now = new Date()) {
	const { timeZone } = await assemblerCalendar(db);
	const since = startOfCalendarDay(
		mondayOf(now, DASHBOARD_WEEKS - 1, timeZone),
		timeZone
	).getTime();
	const offsetS = Math.round(tzOffset(timeZone, now) * 60);
	const week = (col: string) =>
		sql.raw(`date(${col} / 1000 + ${offsetS}, 'unixepoch', '-6 days', 'weekday 1')`);
	const [byState, byModel, builds, shipments] = await Promise.all([
		db.all<{ state: string; n: number }>(
			sql`SELECT state, count(*) AS n FROM modules GROUP BY state`
		),
		db.all<{ code: string; state: string; n: number }>(
			sql`SELECT m.code AS code, mo.state AS state, count(*) AS n FROM modules mo JOIN module_models m ON m.id = mo.model_id GROUP BY m.code, mo.state ORDER BY m.code`
		),
		db.all<{ week: string; n: number }>(
			sql`SELECT ${week('built_at')} AS week, count(*) AS n FROM modules WHERE built_at >= ${since} GROUP BY week`
		),
		db.all<{ week: string; n: number }>(
			sql`SELECT ${week('shipped_at')} AS week, count(*) AS n FROM modules WHERE shipped_at >= ${since} GROUP BY week`
		)
	]);
	const weeks = Array.from({ length: DASHBOARD_WEEKS }, (_, i) =>
		mondayOf(now, DASHBOARD_WEEKS - 1 - i, timeZone)
	);
	const series = (rows: { week: string; n: number }[]) =>
		weeks.map((w) => ({ week: w, n: rows.find((r) => r.week === w)?.n ?? 0 }));
	const models = new Map<string, Record<string, number>>();
	for (const r of byModel) models.set(r.code, { ...(models.get(r.code) ?? {}), [r.state]: r.n });
	return {
		byState: Object.fromEntries(byState.map((r) => [r.state, r.n])) as Record<string, number>,
		byModel: [...models].map(([code, states]) => ({
			code,
			states,
			total: Object.values(states).reduce((a, b) => a + b, 0)
		})),
		builds: series(builds),
		shipments: series(shipments)
	};
}

/**
 * Claims on the dashboard: open claims by how long they have waited, and decisions of the
 * last twelve months by month and outcome, months read in the assembler's time zone.
 */
export async function claimFigures(db: Db, now = new Date(), timeZone?: string) {
	const zone = timeZone ?? (await assemblerCalendar(db)).timeZone;
	const [open, decided] = await Promise.all([
		db
			.select({ filedAt: claims.filedAt })
			.from(claims)
			.where(inArray(claims.state, [...AWAITING_DECISION])),
		db
			.select({ decidedAt: claims.decidedAt, decision: claims.decision })
			.from(claims)
			.where(
				and(
					isNotNull(claims.decision),
					// 13 months back is enough for twelve calendar months in any time zone.
					gte(claims.decidedAt, new Date(now.getTime() - 397 * 86_400_000))
				)
			)
	]);
	return {
		open: open.length,
		ages: openClaimAges(
			open.map((o) => o.filedAt),
			now
		),
		outcomes: outcomesByMonth(
			decided.flatMap((d) =>
				d.decidedAt && d.decision ? [{ decidedAt: d.decidedAt, decision: d.decision }] : []
			),
			now,
			zone
		)
	};
}
