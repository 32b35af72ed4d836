/**
 * Dates in queries and forms are real calendar days or a 400 with a message. Leap years by
 * the Gregorian rule (divisible by 4, except centuries not divisible by 400).
 */
import { describe, expect, it } from 'vitest';
import { traceQuerySchema } from '../../src/lib/schemas/trace';
import { parseFleetQuery } from '../../src/lib/schemas/fleet';
import { safeNext } from '../../src/lib/server/safe-redirect';

const trace = (builtFrom: string) => traceQuerySchema.safeParse({ builtFrom });

describe('trace dates', () => {
	it.each([
		'2026-99-99',
		'2026-02-30',
		'2026-02-29',
		'2100-02-29',
		'2026-04-31',
		'2026-13-01',
		'2026-00-10'
	])('%s is refused with a message, not read as another day', (d) => {
		const r = trace(d);
		expect(r.success).toBe(false);
		expect(r.error!.issues[0].message).toMatch(/date/i);
	});
	it.each(['2028-02-29', '2000-02-29', '2026-12-31', '2026-01-01'])('%s is a real day', (d) => {
		expect(trace(d).success).toBe(true);
	});
	it('the fleet filter refuses 2026-02-30 too', () => {
		expect(parseFleetQuery(new URLSearchParams({ builtFrom: '2026-02-30' })).success).toBe(false);
	});
});

describe('the page after sign-in (no open redirect)', () => {
	const origin = 'https://register.tidewater.example';
	it.each([
		['/\\evil.example', '/'],
		['/\t/evil.example', '/'],
		['/%09/evil.example', '/%09/evil.example'],
		['//evil.example', '/'],
		['/\\/evil.example', '/'],
		['https://evil.example/', '/'],
		['javascript:alert(1)', '/'],
		['/\n/evil.example', '/'],
		['', '/'],
		['/fleet?state=shipped#top', '/fleet?state=shipped#top'],
		['/modules/PL48-26-000123F', '/modules/PL48-26-000123F']
	])('%j → %j', (next, expected) => {
		expect(safeNext(next, origin)).toBe(expected);
		const resolved = new URL(safeNext(next, origin), origin);
		expect(resolved.origin).toBe(origin);
	});
});
