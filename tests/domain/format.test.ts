import { describe, expect, it } from 'vitest';
import { createFormat, NEUTRAL } from '$lib/domain/format';

const NBSP = '\u00a0';

describe('createFormat: one way to print on every page', () => {
	const gb = createFormat({ locale: 'en-GB', timeZone: 'Etc/GMT-10' });

	it('groups numbers by the locale (en-GB: comma every three digits, CLDR)', () => {
		expect(gb.number(10_115_300)).toBe('10,115,300');
		expect(gb.unit(10_115_300, 'Wh')).toBe(`10,115,300${NBSP}Wh`);
	});

	it('de-DE groups with a full stop and uses a decimal comma (CLDR)', () => {
		const de = createFormat({ locale: 'de-DE', timeZone: 'UTC' });
		expect(de.number(10_115_300)).toBe('10.115.300');
		expect(de.unit(51.25, 'V', 2)).toBe(`51,25${NBSP}V`);
	});

	it('prints cycles as whole numbers by default', () => {
		expect(gb.unit(1099.49, 'cycles')).toBe(`1,099${NBSP}cycles`);
	});

	it('prints a calendar day as the day it names, whatever the zone', () => {
		// en-GB medium date style is "30 Nov 2026" (CLDR).
		expect(gb.day('2026-11-30')).toBe('30 Nov 2026');
		expect(createFormat({ locale: 'en-GB', timeZone: 'Etc/GMT+12' }).day('2026-11-30')).toBe(
			'30 Nov 2026'
		);
	});

	it('prints an instant as the day it is in the zone, either side of local midnight', () => {
		expect(gb.day(new Date('2026-11-30T13:59:59Z'))).toBe('30 Nov 2026');
		expect(gb.day(new Date('2026-11-30T14:00:00Z'))).toBe('1 Dec 2026');
		expect(gb.day('2028-02-28T14:00:00Z')).toBe('29 Feb 2028');
	});

	it('prints date and time in the zone (08:00 in UTC+10 is 22:00 UTC the day before)', () => {
		expect(gb.dateTime(new Date('2026-11-29T22:00:00Z'))).toBe('30 Nov 2026, 08:00');
	});

	it('says — for nothing', () => {
		expect(gb.day(null)).toBe('—');
		expect(gb.number(undefined)).toBe('—');
		expect(gb.unit(Number.NaN, 'V')).toBe('—');
	});
});

// Messages from pure code (domain rules, schema errors) print through NEUTRAL, built on the same
// createFormat as the pages. Expected values are Intl's own output for the locale, and CLDR's
// published patterns (en: "," groups of three, "." decimals; de: "." groups, "," decimals).
describe('NEUTRAL: the one formatter of messages from pure code', () => {
	it('is the default locale (en-GB) and groups as Intl does for it', () => {
		expect(NEUTRAL.locale).toBe('en-GB');
		for (const x of [999, 1000, 20_167, 10_115_300, 1_000_000])
			expect(NEUTRAL.number(x)).toBe(new Intl.NumberFormat('en-GB').format(x));
		expect(NEUTRAL.number(10_115_300)).toBe('10,115,300');
	});

	it('prints a reading with at least and at most so many decimals (decimal)', () => {
		expect(NEUTRAL.decimal(51, 1, 2)).toBe('51.0');
		expect(NEUTRAL.decimal(51.256, 1, 2)).toBe('51.26');
		expect(NEUTRAL.decimal(1500.5, 1, 2)).toBe('1,500.5');
		expect(createFormat({ locale: 'de-DE' }).decimal(1500.5, 1, 2)).toBe('1.500,5');
	});

	it('prints the time of day in the zone (08:00 in UTC+10 is 22:00 UTC the day before)', () => {
		const gb = createFormat({ locale: 'en-GB', timeZone: 'Etc/GMT-10' });
		expect(gb.time(new Date('2026-11-29T22:00:00Z'))).toBe('08:00');
		expect(gb.time(null)).toBe('—');
	});

	it('a page in the default locale and a message print the same figure the same way', () => {
		const page = createFormat({ locale: 'en-GB', timeZone: 'Etc/GMT-10' });
		expect(page.number(20_167)).toBe(NEUTRAL.number(20_167));
		expect(page.unit(10_115_300, 'Wh')).toBe(NEUTRAL.unit(10_115_300, 'Wh'));
	});
});
