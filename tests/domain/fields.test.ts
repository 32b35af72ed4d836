import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { readDecimal } from '$lib/domain/decimal';
import {
	calendarDate,
	optionalChoice,
	optionalText,
	queryInt,
	recordId,
	trueFalse,
	yesNo
} from '$lib/schemas/fields';
import { auditQuerySchema } from '$lib/schemas/audit';
import { peopleQuerySchema } from '$lib/schemas/people';
import { passportGrantSchema } from '$lib/schemas/passport';
import { siteSchema, systemSchema, placeModuleSchema } from '$lib/schemas/site';
import { fileClaimFormSchema, moveClaimSchema, returnInspectionSchema } from '$lib/schemas/claim';
import { commissioningSchema } from '$lib/schemas/commissioning';
import { dealerSchema } from '$lib/schemas/dealer';
import { newShipmentSchema, shipmentScanSchema } from '$lib/schemas/shipment';
import { traceQuerySchema, noticeSchema } from '$lib/schemas/trace';
import { inviteSchema } from '$lib/schemas/auth';
import { calendarSettingsSchema } from '$lib/schemas/organisation';
import { tokenSchema } from '$lib/schemas/token';
import { buildSchema } from '$lib/schemas/build';

describe('readDecimal: one rule for typed decimals', () => {
	it('reads a full stop and a comma the same way, bare fractions too', () => {
		// The rule is ours (documented in domain/decimal.ts); values by hand.
		expect(readDecimal('12.5')).toBe(12.5);
		expect(readDecimal('12,5')).toBe(12.5);
		expect(readDecimal(',5')).toBe(0.5);
		expect(readDecimal('.5')).toBe(0.5);
		expect(readDecimal('-,5')).toBe(-0.5);
		expect(readDecimal('−2')).toBe(-2);
		expect(readDecimal('5,')).toBe(5);
		expect(readDecimal(' 51,20 ')).toBe(51.2);
		expect(readDecimal(3)).toBe(3);
	});
	it('says blank is not given and refuses what it would have to guess', () => {
		expect(readDecimal('')).toBeNull();
		expect(readDecimal('   ')).toBeNull();
		expect(readDecimal(undefined)).toBeNull();
		for (const s of ['1,234.5', '1.234,5', '1 234', '1,2,3', 'abc', '12V', '1e5', ',', '--1'])
			expect(readDecimal(s), s).toBe('invalid');
		expect(readDecimal(Number.NaN)).toBe('invalid');
		expect(readDecimal('9'.repeat(200_000))).toBe('invalid');
	});
});

describe('calendarDate', () => {
	const d = calendarDate('Built from');
	it('takes real days and the leap day of 2028', () => {
		expect(d.parse('2028-02-29')).toBe('2028-02-29');
		expect(d.parse('2026-11-30')).toBe('2026-11-30');
	});
	it('refuses 2026-02-30, 2026-99-99 and 2027-02-29 (no such day) and 30/11/2026 (not YYYY-MM-DD)', () => {
		// Gregorian calendar: 2027 is not a leap year, so February has 28 days.
		for (const s of ['2026-02-30', '2026-99-99', '2027-02-29']) {
			const r = d.safeParse(s);
			expect(r.success, s).toBe(false);
			expect(r.error?.issues[0].message).toBe(
				'Built from: this date does not exist; give a real date, checking the month and day.'
			);
		}
		for (const s of ['30/11/2026', '2026-1-1', 'x'.repeat(200_000)]) {
			const r = d.safeParse(s);
			expect(r.success, s).toBe(false);
			expect(r.error?.issues).toHaveLength(1);
			expect(r.error?.issues[0].message).toBe(
				'Built from: write the date as YYYY-MM-DD, like 2026-11-30.'
			);
		}
	});
});

describe('record ids, choices and true/false', () => {
	it('a record id is a positive whole number; 0, 1.5, text and 21 digits are refused', () => {
		const id = recordId('Choose a dealer.');
		expect(id.parse('7')).toBe(7);
		for (const bad of ['0', '-3', '1.5', 'abc', '9'.repeat(21), '']) {
			const r = id.safeParse(bad);
			expect(r.success, bad).toBe(false);
			expect(r.error?.issues[0].message).toBe('Choose a dealer.');
		}
	});
	it('a choice: blank → undefined, a listed value passes, anything else has the message', () => {
		const c = optionalChoice(['active', 'invited'], 'Choose active or invited.');
		expect(c.parse('')).toBeUndefined();
		expect(c.parse('invited')).toBe('invited');
		expect(c.safeParse('x'.repeat(200_000)).error?.issues[0].message).toBe(
			'Choose active or invited.'
		);
	});
	it('true/false from JSON or a select', () => {
		const f = trueFalse();
		expect([f.parse(true), f.parse('false')]).toEqual([true, false]);
		expect(f.safeParse('yes').success).toBe(false);
	});
});

describe('small readers', () => {
	it('optional text: blank → undefined, trimmed, bounded', () => {
		const t = optionalText(10, 'Too long.');
		expect(t.parse('  ')).toBeUndefined();
		expect(t.parse(' ab ')).toBe('ab');
		expect(t.safeParse('x'.repeat(11)).error?.issues[0].message).toBe('Too long.');
	});
	it('yes/no: yes, no, blank', () => {
		const y = yesNo('Polarity');
		expect([y.parse('yes'), y.parse('no'), y.parse('')]).toEqual([true, false, null]);
		expect(y.safeParse('maybe').success).toBe(false);
	});
	it('query integers', () => {
		const q = queryInt(1, 100, 'Page');
		expect(q.parse('7')).toBe(7);
		expect(q.parse('')).toBeUndefined();
		expect(q.safeParse('7.5').error?.issues[0].message).toBe(
			'Page must be a whole number from 1 to 100.'
		);
		expect(q.safeParse('9'.repeat(200_000)).success).toBe(false);
	});
});

/**
 * Every text field of every form schema refuses a 200 KB string with a message on that field
 * (security issue item 1). The shapes are read from the schemas themselves, so a new field
 * without a maximum fails here.
 */
describe('a 200 KB string in any field', () => {
	const big = 'a'.repeat(200 * 1024);
	// zod 4 internals: unwrap preprocess pipes, refinements and intersections to the object shapes.
	function shapeKeys(schema: z.ZodType): string[] {
		const def = (schema as unknown as { _zod: { def: Record<string, unknown> } })._zod.def;
		if (def.type === 'object') return Object.keys(def.shape as object);
		if (def.type === 'pipe')
			return [...shapeKeys(def.in as z.ZodType), ...shapeKeys(def.out as z.ZodType)];
		if (def.type === 'intersection')
			return [...shapeKeys(def.left as z.ZodType), ...shapeKeys(def.right as z.ZodType)];
		return [];
	}
	const schemas: [string, z.ZodType][] = [
		['site', siteSchema],
		['system', systemSchema],
		['place module', placeModuleSchema],
		['file claim', fileClaimFormSchema],
		['move claim', moveClaimSchema],
		['return inspection', returnInspectionSchema],
		['commissioning', commissioningSchema],
		['dealer', dealerSchema],
		['new shipment', newShipmentSchema],
		['shipment scan', shipmentScanSchema],
		['trace', traceQuerySchema],
		['notice', noticeSchema],
		['invite', inviteSchema],
		['calendar', calendarSettingsSchema],
		['token', tokenSchema],
		['build', buildSchema],
		['audit query', auditQuerySchema],
		['people query', peopleQuerySchema],
		['passport link', passportGrantSchema]
	];
	for (const [name, schema] of schemas) {
		it(`${name}: every field is refused with a message`, () => {
			const keys = [...new Set(shapeKeys(schema))].filter((k) => k !== 'log');
			expect(keys.length).toBeGreaterThan(0);
			const input = Object.fromEntries(keys.map((k) => [k, big]));
			const r = schema.safeParse(input);
			expect(r.success).toBe(false);
			for (const k of keys) {
				const issue = r.error!.issues.find((i) => i.path[0] === k);
				expect(issue, `${name}.${k}`).toBeDefined();
				expect(issue!.message.length, `${name}.${k}`).toBeLessThan(300);
			}
		});
	}
});
