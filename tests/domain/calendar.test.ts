import { describe, expect, it } from 'vitest';
import {
	addCalendarDays,
	calendarDay,
	calendarYear,
	isCalendarDate,
	isLocale,
	isTimeZone,
	mondayOfDay,
	startOfCalendarDay
} from '$lib/domain/calendar';

/**
 * Independent source: the platform's Intl.DateTimeFormat with `timeZone` (ICU's tz data),
 * asked for year, month and day parts; it shares no code with @date-fns/tz's formatting.
 */
function intlDay(at: Date, timeZone: string): string {
	const parts = new Intl.DateTimeFormat('en-US', {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit'
	}).formatToParts(at);
	const get = (t: string) => parts.find((p) => p.type === t)!.value;
	return `${get('year')}-${get('month')}-${get('day')}`;
}

const ZONE = 'Etc/GMT-10'; // POSIX-style sign (IANA tz database, "etcetera" file): Etc/GMT-10 is UTC+10.

describe('calendarDay in Etc/GMT-10 (UTC+10, no daylight saving)', () => {
	// Hand-computed: UTC+10 midnight of 1 December 2026 is 2026-11-30T14:00:00Z.
	const cases: [string, string][] = [
		['2026-11-30T13:59:59Z', '2026-11-30'], // 23:59:59 local, hand-computed offset +10 h
		['2026-11-30T14:00:00Z', '2026-12-01'], // 00:00:00 local
		['2026-11-29T22:00:00Z', '2026-11-30'], // 08:00 local: the commissioning of the issue
		['2026-12-31T13:59:59.999Z', '2026-12-31'], // last millisecond of the year locally
		['2026-12-31T14:00:00Z', '2027-01-01'], // new year locally, still 31 December in UTC
		['2028-02-28T14:00:00Z', '2028-02-29'], // leap day begins (2028 is a leap year: divisible by 4, not by 100)
		['2028-02-29T13:59:59Z', '2028-02-29'], // leap day's last second
		['2028-02-29T14:00:00Z', '2028-03-01']
	];
	for (const [at, day] of cases) {
		it(`${at} is ${day} (hand-computed offset; checked against Intl.DateTimeFormat)`, () => {
			expect(calendarDay(new Date(at), ZONE)).toBe(day);
			expect(intlDay(new Date(at), ZONE)).toBe(day);
		});
	}

	it('is the UTC date in UTC', () => {
		expect(calendarDay(new Date('2026-11-30T14:00:00Z'), 'UTC')).toBe('2026-11-30');
	});

	it('follows daylight saving in a zone that has it (Etc zones have none; Intl as the source)', () => {
		// America/New_York is a rule-bearing IANA zone used only as a test fixture of DST.
		for (const at of ['2026-03-08T04:59:59Z', '2026-03-08T05:00:00Z', '2026-11-01T04:30:00Z']) {
			expect(calendarDay(new Date(at), 'America/New_York')).toBe(
				intlDay(new Date(at), 'America/New_York')
			);
		}
	});

	it('gives the local year for yearly numbers', () => {
		expect(calendarYear(new Date('2026-12-31T13:59:59Z'), ZONE)).toBe(2026);
		expect(calendarYear(new Date('2026-12-31T14:00:00Z'), ZONE)).toBe(2027);
	});
});

describe('startOfCalendarDay', () => {
	it('local midnight of a day in UTC+10 is 14:00 UTC the day before (hand-computed)', () => {
		expect(startOfCalendarDay('2026-12-01', ZONE).toISOString()).toBe('2026-11-30T14:00:00.000Z');
		expect(startOfCalendarDay('2028-02-29', ZONE).toISOString()).toBe('2028-02-28T14:00:00.000Z');
	});
	it('round-trips with calendarDay', () => {
		const start = startOfCalendarDay('2026-11-30', ZONE);
		expect(calendarDay(start, ZONE)).toBe('2026-11-30');
		expect(calendarDay(new Date(start.getTime() - 1), ZONE)).toBe('2026-11-29');
	});
	it('refuses a day that does not exist', () => {
		expect(() => startOfCalendarDay('2026-02-30', ZONE)).toThrow(/not a calendar day/);
	});
});

describe('isCalendarDate (Gregorian calendar rules, ISO 8601 YYYY-MM-DD)', () => {
	it('takes real days, leap days included', () => {
		for (const d of ['2026-01-01', '2026-12-31', '2028-02-29', '2000-02-29', '2026-02-28'])
			expect(isCalendarDate(d), d).toBe(true);
	});
	it('refuses days that do not exist and other shapes', () => {
		// 2026 and 1900 are not leap years (1900 divisible by 100 but not by 400).
		for (const d of [
			'2026-02-29',
			'1900-02-29',
			'2026-02-30',
			'2026-99-99',
			'2026-04-31',
			'2026-00-10',
			'2026-1-1',
			'20261201',
			'2026-12-01T00:00',
			''
		])
			expect(isCalendarDate(d), d).toBe(false);
	});
});

describe('calendar arithmetic', () => {
	it('adds days across month, year and leap-day ends', () => {
		expect(addCalendarDays('2026-11-30', 1)).toBe('2026-12-01');
		expect(addCalendarDays('2026-12-31', 1)).toBe('2027-01-01');
		expect(addCalendarDays('2028-02-28', 1)).toBe('2028-02-29');
		expect(addCalendarDays('2028-03-01', -1)).toBe('2028-02-29');
	});
	it('finds the Monday of the ISO week (2026-11-30 is a Monday, per any 2026 calendar)', () => {
		expect(mondayOfDay('2026-11-30')).toBe('2026-11-30');
		expect(mondayOfDay('2026-12-06')).toBe('2026-11-30'); // Sunday
		expect(mondayOfDay('2026-12-02')).toBe('2026-11-30');
	});
});

describe('settings checks', () => {
	it('knows IANA zones and refuses made-up ones', () => {
		expect(isTimeZone('Etc/GMT-10')).toBe(true);
		expect(isTimeZone('UTC')).toBe(true);
		expect(isTimeZone('Mars/Olympus')).toBe(false);
		expect(isTimeZone('x'.repeat(200_000))).toBe(false);
	});
	it('knows locale tags', () => {
		expect(isLocale('en-GB')).toBe(true);
		expect(isLocale('de-DE')).toBe(true);
		expect(isLocale('not a locale')).toBe(false);
	});
});
