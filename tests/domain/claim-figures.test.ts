import { describe, expect, it } from 'vitest';
import {
	ageInDays,
	lastMonths,
	monthIn,
	openClaimAges,
	outcomesByMonth
} from '$lib/domain/claim-figures';

const at = (iso: string) => new Date(iso);
const DAY = 86_400_000;

describe('age of open claims', () => {
	const now = at('2026-12-02T09:00:00Z');

	it('counts whole elapsed days: 23 h 59 min is 0, exactly 24 h is 1', () => {
		expect(ageInDays(new Date(now.getTime() - DAY + 60_000), now)).toBe(0);
		expect(ageInDays(new Date(now.getTime() - DAY), now)).toBe(1);
		expect(ageInDays(new Date(now.getTime() + 5_000), now)).toBe(0); // clock skew: never negative
	});

	it('puts each band boundary in the lower band and one day more in the next', () => {
		const ago = (d: number) => new Date(now.getTime() - d * DAY);
		const bands = openClaimAges(
			[ago(2), ago(3), ago(7), ago(8), ago(10), ago(11), ago(30), ago(31)],
			now
		);
		expect(bands.map((b) => [b.label, b.n])).toEqual([
			['0–2 days', 1],
			['3–7 days', 2],
			['8–10 days', 2],
			['11–30 days', 2],
			['over 30 days', 1]
		]);
	});

	// The target decision time of 10 calendar days is the claim workflow's own (TARGET_RESPONSE_DAYS).
	it('marks the bands past the 10-day target as late', () =>
		expect(openClaimAges([], now).map((b) => b.late)).toEqual([false, false, false, true, true]));
});

describe('outcomes by month, in the assembler’s time zone', () => {
	// IANA tz database, file "etcetera": Etc/GMT-10 is UTC+10 (the POSIX sign is inverted).
	it('reads the month on the calendar of the time zone, either side of midnight', () => {
		expect(monthIn(at('2026-11-30T13:59:59Z'), 'Etc/GMT-10')).toBe('2026-11');
		expect(monthIn(at('2026-11-30T14:00:00Z'), 'Etc/GMT-10')).toBe('2026-12');
		expect(monthIn(at('2026-11-30T14:00:00Z'), 'UTC')).toBe('2026-11');
	});

	it('lists twelve months back across the turn of a year', () =>
		expect(lastMonths(at('2027-02-15T00:00:00Z'), 'UTC', 4)).toEqual([
			'2026-11',
			'2026-12',
			'2027-01',
			'2027-02'
		]));

	it('counts a decision on a leap day in February', () => {
		const rows = outcomesByMonth(
			[
				{ decidedAt: at('2028-02-29T12:00:00Z'), decision: 'covered' },
				{ decidedAt: at('2028-02-29T23:30:00Z'), decision: 'not_covered' }, // 1 March in UTC+10
				{ decidedAt: at('2027-01-01T00:00:00Z'), decision: 'covered' } // outside the 12 months
			],
			at('2028-03-10T00:00:00Z'),
			'Etc/GMT-10'
		);
		expect(rows).toHaveLength(12);
		expect(rows.at(-2)).toEqual({ month: '2028-02', covered: 1, notCovered: 0 });
		expect(rows.at(-1)).toEqual({ month: '2028-03', covered: 0, notCovered: 1 });
		expect(rows.reduce((a, r) => a + r.covered + r.notCovered, 0)).toBe(2);
	});
});
