import { describe, expect, it } from 'vitest';
import { createFormat } from '$lib/domain/format';

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
