/**
 * Calendar days in the assembler's time zone. A business date (build, test, commissioning,
 * warranty start, claim, certificate …) is the day on the assembler's wall calendar, not the
 * UTC date: a commissioning at 08:00 in UTC+10 happens on that day, not the one before.
 * Time zones are IANA names, read through `@date-fns/tz` (the platform's Intl time-zone data),
 * never hand-written offsets. Pure: the caller passes `now`.
 */
import { TZDate, tz } from '@date-fns/tz';
import { format } from 'date-fns';

export { DEFAULT_LOCALE, DEFAULT_TIME_ZONE, type CalendarSettings } from './calendar-settings';

/** True for a time zone the platform knows by IANA name (e.g. `Etc/GMT-10`, `UTC`). */
export function isTimeZone(s: string): boolean {
	if (typeof s !== 'string' || s.length === 0 || s.length > 64) return false;
	try {
		new Intl.DateTimeFormat('en', { timeZone: s });
		return true;
	} catch {
		return false;
	}
}

/** True for a BCP 47 locale tag the platform can format with (e.g. `en-GB`, `de-DE`). */
export function isLocale(s: string): boolean {
	if (typeof s !== 'string' || s.length < 2 || s.length > 35) return false;
	try {
		return Intl.DateTimeFormat.supportedLocalesOf([s]).length === 1;
	} catch {
		return false;
	}
}

/** The calendar day (YYYY-MM-DD) that `now` falls on in `timeZone`. */
export function calendarDay(now: Date | number, timeZone: string): string {
	return format(now, 'yyyy-MM-dd', { in: tz(timeZone) });
}

/**
 * The calendar day of `now` on the device's own clock and zone: what a phone working offline
 * dates its own work with until the register dates it on the assembler's calendar.
 */
export function deviceCalendarDay(now: Date | number): string {
	return format(now, 'yyyy-MM-dd');
}

/** The calendar year that `now` falls in, in `timeZone`: yearly numbers restart with it. */
export function calendarYear(now: Date | number, timeZone: string): number {
	return Number(calendarDay(now, timeZone).slice(0, 4));
}

/** A real calendar day written YYYY-MM-DD (2026-02-30 and 2026-99-99 are not; 2028-02-29 is). */
export function isCalendarDate(s: string): boolean {
	if (typeof s !== 'string' || s.length !== 10) return false;
	const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(s);
	if (!m) return false;
	const [y, mo, d] = [Number(m[1]), Number(m[2]), Number(m[3])];
	const t = new Date(Date.UTC(y, mo - 1, d));
	return t.getUTCFullYear() === y && t.getUTCMonth() === mo - 1 && t.getUTCDate() === d;
}

/** The instant a calendar day begins in `timeZone` (for "built from … to …" ranges). */
export function startOfCalendarDay(day: string, timeZone: string): Date {
	if (!isCalendarDate(day)) throw new RangeError(`"${day}" is not a calendar day (YYYY-MM-DD).`);
	const [y, m, d] = day.split('-').map(Number);
	return new Date(new TZDate(y, m - 1, d, timeZone).getTime());
}

/** The day `n` calendar days after `day` (negative: before). Pure calendar arithmetic, no zone. */
export function addCalendarDays(day: string, n: number): string {
	if (!isCalendarDate(day)) throw new RangeError(`"${day}" is not a calendar day (YYYY-MM-DD).`);
	const [y, m, d] = day.split('-').map(Number);
	return new Date(Date.UTC(y, m - 1, d + n)).toISOString().slice(0, 10);
}

/** The Monday of the ISO week (ISO 8601: weeks start on Monday) that contains `day`. */
export function mondayOfDay(day: string): string {
	const [y, m, d] = day.split('-').map(Number);
	const weekday = (new Date(Date.UTC(y, m - 1, d)).getUTCDay() + 6) % 7;
	return addCalendarDays(day, -weekday);
}
