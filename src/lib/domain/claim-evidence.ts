/**
 * Rules on a warranty claim's evidence that need no database: the per-module share of an
 * inverter log's throughput, and figures no module can have produced. Pure (pass `now`).
 */

import { calendarDay, isCalendarDate, type CalendarSettings } from './calendar';
import { createFormat } from './format';

const DAY_MS = 86_400_000;

/** A problem with one field of the evidence form. */
export interface Issue {
	path: string;
	message: string;
}

/** The figures of a claim's evidence these rules read. */
export interface EvidenceFigures {
	throughputWh?: number;
	/** Whose throughput `throughputWh` is: the whole system's (shared over its modules) or one module's. */
	throughputScope: 'system' | 'module';
	cycleCount?: number;
	log?: { lastAt?: string | null } | null;
}

/** Numbers in the assessment's sentences, printed by the one formatting module (`domain/format`). */
export function fmtNumber(x: number, decimals = 0, locale?: string): string {
	return createFormat({ locale }).number(x, decimals);
}

/** Per-module throughput: the system's figure shared equally over its modules, or the module's own. */
export function perModuleThroughput(
	evidence: Pick<EvidenceFigures, 'throughputWh' | 'throughputScope'>,
	moduleCount: number
): number | null {
	if (evidence.throughputWh === undefined) return null;
	return evidence.throughputScope === 'system'
		? evidence.throughputWh / Math.max(1, moduleCount)
		: evidence.throughputWh;
}

/**
 * Figures no module can have produced: more equivalent full cycles per day since the
 * warranty started than a full discharge and a full recharge at the model's maximum
 * continuous C-rate allow (each takes 1/C hours, so at most 12 × C cycles a day). A
 * log that ends after the claim date is refused too. Returns issues on the form's fields.
 */
export function implausibleEvidence(
	evidence: EvidenceFigures,
	ctx: {
		model: { code: string; maxContinuousC: number; usableWh: number };
		moduleCount: number;
		startsOn: string | null;
		now: Date;
		/** The assembler's calendar: "today" is its wall-calendar day, numbers in its locale. */
		calendar: CalendarSettings;
	}
): Issue[] {
	const issues: Issue[] = [];
	const today = calendarDay(ctx.now, ctx.calendar.timeZone);
	const fmtNumber = (x: number, d = 0) => createFormat(ctx.calendar).number(x, d);
	const start = ctx.startsOn ? Date.parse(`${ctx.startsOn}T00:00:00Z`) : NaN;
	const days = Number.isFinite(start) ? Math.max(1, (ctx.now.getTime() - start) / DAY_MS) : null;
	const maxPerDay = 12 * ctx.model.maxContinuousC;
	const perModule = perModuleThroughput(evidence, ctx.moduleCount);
	if (days !== null && perModule !== null) {
		const perDay = perModule / ctx.model.usableWh / days;
		if (perDay > maxPerDay) {
			issues.push({
				path: 'throughputWh',
				message: `${fmtNumber(evidence.throughputWh!)} Wh would be ${fmtNumber(perDay, 1)} equivalent full cycles a day per module since ${ctx.startsOn}; a ${ctx.model.code} cannot do more than ${fmtNumber(maxPerDay)} a day at its ${fmtNumber(ctx.model.maxContinuousC, 1)} C maximum rate. Check the figure, its unit (Wh, not kWh) and whether it is for the whole system.`
			});
		}
	}
	if (
		days !== null &&
		evidence.cycleCount !== undefined &&
		evidence.cycleCount / days > maxPerDay
	) {
		issues.push({
			path: 'cycleCount',
			message: `${fmtNumber(evidence.cycleCount)} cycles since ${ctx.startsOn} would be ${fmtNumber(evidence.cycleCount / days, 1)} a day; a ${ctx.model.code} cannot do more than ${fmtNumber(maxPerDay)} a day. Check the counter reading.`
		});
	}
	const lastDay = evidence.log?.lastAt?.slice(0, 10);
	if (lastDay && isCalendarDate(lastDay) && lastDay > today) {
		issues.push({
			path: 'log',
			message: `The inverter log runs to ${evidence.log!.lastAt}, after today (${today}): check the inverter's clock or the file.`
		});
	}
	return issues;
}
