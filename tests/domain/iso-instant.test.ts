import { describe, expect, it } from 'vitest';
import { isoInstant, isoInstantsInJson } from '$lib/domain/iso-instant';

// The reference throughout is the JavaScript engine's own Date.prototype.toISOString
// (ECMA-262 §21.4.4.36), an implementation independent of ours.
const iso = (ms: number) => new Date(ms).toISOString();

describe('isoInstant', () => {
	it('writes instants exactly as Date.prototype.toISOString does, at every edge', () => {
		const edges = [
			0,
			1,
			-1,
			999,
			1000,
			// Either side of midnight UTC, and of the leap days 2000-02-29 (a leap century),
			// 2028-02-29, and 2100-02-28 → 03-01 (2100 is not a leap year).
			Date.UTC(2026, 11, 31, 23, 59, 59, 999),
			Date.UTC(2027, 0, 1, 0, 0, 0, 0),
			Date.UTC(2000, 1, 28, 23, 59, 59, 999),
			Date.UTC(2000, 1, 29, 0, 0, 0, 0),
			Date.UTC(2000, 1, 29, 23, 59, 59, 999),
			Date.UTC(2000, 2, 1, 0, 0, 0, 0),
			Date.UTC(2028, 1, 29, 12, 0, 0, 1),
			Date.UTC(2100, 1, 28, 23, 59, 59, 999),
			Date.UTC(2100, 2, 1, 0, 0, 0, 0),
			Date.UTC(1969, 11, 31, 23, 59, 59, 999),
			// The ends of the four-digit years, and past them (Date's own six-digit form).
			-62_167_219_200_000,
			-62_167_219_200_001,
			253_402_300_799_999,
			253_402_300_800_000,
			Date.UTC(999, 5, 15, 6, 7, 8, 9),
			-60_000_000_000_000 // in the year 68
		];
		for (const ms of edges) expect(isoInstant(ms), String(ms)).toBe(iso(ms));
		// 100,000 instants spread over 1900–2200 by a fixed generator.
		let seed = 17;
		const span = Date.UTC(2200, 0) - Date.UTC(1900, 0);
		for (let i = 0; i < 100_000; i++) {
			seed = (seed * 48271) % 2147483647;
			const ms = Date.UTC(1900, 0) + Math.floor((seed / 2147483647) * span);
			if (isoInstant(ms) !== iso(ms)) expect(isoInstant(ms), String(ms)).toBe(iso(ms));
		}
	});

	it('passes what is not a whole number of milliseconds to Date', () => {
		expect(isoInstant(1.5)).toBe(iso(1.5));
		expect(() => isoInstant(Number.NaN)).toThrow(RangeError);
	});
});

describe('isoInstantsInJson', () => {
	it('turns the numbers of keys ending in At into instants, as JSON.stringify writes Dates', () => {
		const rows = [
			{
				serial: 'PL48-26-0000016',
				builtAt: Date.UTC(2026, 9, 5, 8, 0, 0, 5),
				testedAt: Date.UTC(2028, 1, 29, 23, 59, 59, 999),
				shippedAt: null,
				site: 'Gull Cove boatyard'
			},
			// Text that looks like a key inside a value is left alone (its quotes are escaped).
			{ serial: 'x', builtAt: 0, site: 'a "builtAt":1 b', note: 'ends At', n: 5 },
			// A number token that is not a whole number, and one beyond what a Date holds.
			{ testedAt: 1.5e3, shippedAt: 9e15 }
		];
		const withDates = rows.map((r) =>
			Object.fromEntries(
				Object.entries(r).map(([k, v]) => [
					k,
					k.endsWith('At') && typeof v === 'number' && Math.abs(v) <= 8.64e15 ? new Date(v) : v
				])
			)
		);
		expect(isoInstantsInJson(JSON.stringify(rows))).toBe(JSON.stringify(withDates));
		expect(isoInstantsInJson('[]')).toBe('[]');
		expect(isoInstantsInJson('{"builtAt":null}')).toBe('{"builtAt":null}');
	});

	it('reads a 500-row page in one linear pass', () => {
		// A site name of 200,000 characters of near-keys costs one scan, not a backtracking search.
		const long = JSON.stringify([{ site: 'At":'.repeat(50_000), builtAt: 0 }]);
		expect(isoInstantsInJson(long)).toBe(
			JSON.stringify([{ site: 'At":'.repeat(50_000), builtAt: new Date(0) }])
		);
	});
});
