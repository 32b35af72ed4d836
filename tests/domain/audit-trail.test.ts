import { describe, expect, it } from 'vitest';
import { changedFields, recordHref, showValue } from '$lib/domain/audit-trail';
import { auditQuerySchema } from '$lib/schemas/audit';

describe('changedFields: what an audit entry changed', () => {
	it('lists only the fields whose values differ, with both values', () => {
		const { changes } = changedFields(
			JSON.stringify({ role: 'field_tech', name: 'Ada Quill', active: true }),
			JSON.stringify({ role: 'warranty', name: 'Ada Quill', active: false })
		);
		expect(changes).toEqual([
			{ field: 'role', before: 'field_tech', after: 'warranty' },
			{ field: 'active', before: 'yes', after: 'no' }
		]);
	});

	it('a creation lists every field of after; a removal every field of before', () => {
		expect(changedFields(null, JSON.stringify({ a: 1, b: 'x' })).changes).toEqual([
			{ field: 'a', before: '—', after: '1' },
			{ field: 'b', before: '—', after: 'x' }
		]);
		expect(changedFields(JSON.stringify({ a: 1 }), null).changes).toEqual([
			{ field: 'a', before: '1', after: '—' }
		]);
	});

	it('follows nested objects by dotted path and compares arrays whole', () => {
		const { changes } = changedFields(
			JSON.stringify({ limits: { minCapacityAh: 27, maxDcirMOhm: 2 }, serials: ['A', 'B'] }),
			JSON.stringify({ limits: { minCapacityAh: 28, maxDcirMOhm: 2 }, serials: ['A', 'B'] })
		);
		expect(changes).toEqual([{ field: 'limits.minCapacityAh', before: '27', after: '28' }]);
	});

	it('reads a stored value that is not JSON as text, and cuts long values for the screen', () => {
		expect(changedFields('plain words', null).changes).toEqual([
			{ field: 'value', before: 'plain words', after: '—' }
		]);
		const long = showValue('x'.repeat(10_000));
		expect(long.length).toBe(200);
		expect(long.endsWith('…')).toBe(true);
	});

	it('lists at most 60 fields and counts the rest', () => {
		const after = Object.fromEntries(Array.from({ length: 75 }, (_, i) => [`f${i}`, i]));
		const { changes, more } = changedFields(null, JSON.stringify(after));
		expect(changes).toHaveLength(60);
		expect(more).toBe(15);
	});
});

describe('recordHref: where an entry links', () => {
	it('links records by id, claims and shipments through their reference', () => {
		expect(recordHref('module', 'PL48-26-000123F')).toBe('/m/PL48-26-000123F');
		expect(recordHref('system', '12')).toBe('/systems/12');
		const ids = new Map([['claim:CL-2026-0003', 7]]);
		expect(recordHref('claim', 'CL-2026-0003', ids)).toBe('/claims/7');
		expect(recordHref('claim', 'CL-2026-0009', ids)).toBeNull();
		expect(recordHref('api_token', '3')).toBeNull();
	});
});

describe('auditQuerySchema', () => {
	it('takes real calendar dates only, leap days included', () => {
		expect(auditQuerySchema.safeParse({ from: '2028-02-29' }).success).toBe(true);
		expect(auditQuerySchema.safeParse({ from: '2026-02-29' }).success).toBe(false);
		expect(auditQuerySchema.safeParse({ from: '2026-02-30' }).success).toBe(false);
		expect(auditQuerySchema.safeParse({ from: '2026-99-99' }).success).toBe(false);
		expect(auditQuerySchema.safeParse({ from: '2026-12-01', to: '2026-11-30' }).success).toBe(
			false
		);
	});

	it('takes page sizes 1 to 500 and refuses a 200 KB filter quickly', () => {
		expect(auditQuerySchema.safeParse({ pageSize: '1' }).success).toBe(true);
		expect(auditQuerySchema.safeParse({ pageSize: '500' }).success).toBe(true);
		expect(auditQuerySchema.safeParse({ pageSize: '501' }).success).toBe(false);
		expect(auditQuerySchema.safeParse({ pageSize: '0' }).success).toBe(false);
		const r = auditQuerySchema.safeParse({ actor: 'a'.repeat(200_000) });
		expect(r.success).toBe(false);
	});
});
