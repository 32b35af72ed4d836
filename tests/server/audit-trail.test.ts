import { beforeAll, describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import type { Db } from '$lib/server/db';
import type { Actor } from '$lib/server/actor';
import { auditCsv, recordAudit, searchAudit } from '$lib/server/services/audit';
import { actorFor, createSeededDb } from '../factories/db';

let db: Db;
let admin: Actor;
beforeAll(async () => {
	db = await createSeededDb();
	admin = await actorFor(db, 'admin@tidewater.example');
	// Either side of midnight in UTC+10 (Etc/GMT-10): 13:59:59Z is still 30 November there,
	// 14:00:00Z is 1 December (the zone's offset is fixed: POSIX signs, +10 h east).
	await recordAudit(db, admin, {
		action: 'user.update',
		entity: 'user',
		entityId: 901,
		before: { role: 'field_tech' },
		after: { role: 'warranty' },
		at: new Date('2026-11-30T13:59:59Z')
	});
	await recordAudit(db, admin, {
		action: 'user.update',
		entity: 'user',
		entityId: 902,
		before: { active: true },
		after: { active: false, note: '=HYPERLINK("x")' },
		at: new Date('2026-11-30T14:00:00Z')
	});
});

describe('searchAudit', () => {
	it('filters by record and shows the changed fields', async () => {
		const r = await searchAudit(db, { entity: 'user', entityId: '901' });
		expect(r.total).toBe(1);
		expect(r.items[0].changes).toEqual([
			{ field: 'role', before: 'field_tech', after: 'warranty' }
		]);
		expect(r.items[0].href).toBe('/admin/users?q=901');
	});

	it('reads from/to as calendar days in the assembler time zone', async () => {
		const ids = async (from: string, to: string, zone: string) =>
			(await searchAudit(db, { entity: 'user', action: 'user.update', from, to }, zone)).items
				.map((i) => i.entityId)
				.sort();
		expect(await ids('2026-11-30', '2026-11-30', 'Etc/GMT-10')).toEqual(['901']);
		expect(await ids('2026-12-01', '2026-12-01', 'Etc/GMT-10')).toEqual(['902']);
		expect(await ids('2026-11-30', '2026-11-30', 'UTC')).toEqual(['901', '902']);
	});

	it('filters by who and by action family, and pages', async () => {
		const byWho = await searchAudit(db, { actor: admin.label.slice(0, 4), action: 'user' });
		expect(byWho.items.every((i) => i.action.startsWith('user.'))).toBe(true);
		expect(byWho.total).toBeGreaterThanOrEqual(2);
		const one = await searchAudit(db, { action: 'user', pageSize: 1, page: 2 });
		expect(one.items).toHaveLength(1);
		expect(one.page).toBe(2);
		const none = await searchAudit(db, { actor: '%' });
		expect(none.total).toBe(0); // a LIKE wildcard typed by a person is a literal character
	});
});

describe('auditCsv', () => {
	it('is RFC 4180 CSV with formula cells neutralised', async () => {
		const csv = await auditCsv(db, { entity: 'user', entityId: '902' });
		expect(csv.startsWith('\uFEFF')).toBe(true);
		const rows = Papa.parse<string[]>(csv.slice(1).trim()).data;
		expect(rows[0]).toEqual([
			'id',
			'at_utc',
			'who',
			'action',
			'record',
			'record_id',
			'changes',
			'before',
			'after'
		]);
		expect(rows).toHaveLength(2);
		expect(rows[1][1]).toBe('2026-11-30T14:00:00.000Z');
		expect(rows[1][6]).toBe('active: yes → no; note: — → =HYPERLINK("x")');
	});

	it('neutralises a cell that a spreadsheet would run as a formula (OWASP CSV injection)', async () => {
		await recordAudit(db, admin, { action: 'probe', entity: 'probe', entityId: '=1+1', after: {} });
		const csv = await auditCsv(db, { entity: 'probe' });
		const rows = Papa.parse<string[]>(csv.slice(1).trim()).data;
		expect(rows[1][5]).toBe("'=1+1");
	});
});
