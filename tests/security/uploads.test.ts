/**
 * Smaller hardening items: stored upload names take the extension of the detected type
 * (OWASP File Upload Cheat Sheet), and a rig's `?commit=accepted` after a preview of the
 * same file says that this call stored the rows.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { RequestEvent } from '@sveltejs/kit';
import { safeFileName } from '$lib/server/services/attachments';
import type { Db } from '$lib/server/db';
import type { Actor } from '$lib/server/actor';
import { seedDemo } from '$lib/server/seed/demo';
import { actorForEmail } from '$lib/server/seed/demo-actors';
import { makeModules } from '../factories/modules';

describe('safeFileName', () => {
	it.each([
		['poly.html', 'image/jpeg', 'poly.jpg'],
		['IMG_2210.jpg', 'image/png', 'IMG_2210.png'],
		['rack.photo.svg', 'image/webp', 'rack.webp'],
		['../../etc/passwd', 'image/jpeg', 'passwd.jpg'],
		['C:\\Users\\x\\evil.php.jpg', 'image/jpeg', 'evil.jpg'],
		['"; filename=x.html', 'image/png', 'filename_x.png'],
		['', 'image/png', 'photo.png'],
		['.htaccess', 'image/png', 'photo.png'],
		['a'.repeat(200_000) + '.html', 'image/jpeg', 'a'.repeat(80) + '.jpg']
	])('%j as %s → %j', (name, type, expected) => {
		expect(safeFileName(name, type)).toBe(expected);
	});
});

describe('POST /api/imports/factory-tests?commit=accepted after a preview', () => {
	let db: Db;
	let workshop: Actor;
	let serials: string[];
	beforeAll(async () => {
		const dir = mkdtempSync(join(tmpdir(), 'packledger-route-'));
		process.env.DATABASE_URL = `file:${join(dir, 'route.db')}`;
		const { getDb } = await import('$lib/server/db');
		db = await getDb();
		await seedDemo(db, 'test-password-123');
		workshop = await actorForEmail(db, 'workshop@tidewater.example');
		serials = await makeModules(db, workshop, { count: 2, built: 2 });
	});

	const call = async (query: string, csv: string) => {
		const { POST } = await import('../../src/routes/api/imports/factory-tests/+server');
		const url = new URL(`http://localhost/api/imports/factory-tests${query}`);
		const request = new Request(url, {
			method: 'POST',
			headers: { 'content-type': 'text/csv' },
			body: csv
		});
		const event = { url, request, locals: { user: workshop, token: null } };
		const res = await POST(
			event as unknown as RequestEvent<Record<string, never>, '/api/imports/factory-tests'>
		);
		return { status: res.status, body: await res.json() };
	};

	it('answers storedNow: true and alreadySent: false, and only the second time alreadySent', async () => {
		const now = new Date(Date.now() - 3600_000).toISOString().slice(0, 19) + 'Z';
		const csv =
			'serial,tested_at,capacity_ah,dcir_mohm,cell_spread_mv,insulation_mohm\n' +
			serials.map((s) => `${s},${now},46.8,5.1,8,500`).join('\n') +
			'\n';
		const preview = await call('', csv);
		expect(preview.status).toBe(201);
		expect(preview.body.import.status).toBe('previewed');
		const stored = await call('?commit=accepted', csv);
		expect(stored.body.import.status).toBe('committed');
		expect(stored.body.alreadySent).toBe(false);
		expect(stored.body.storedNow).toBe(true);
		expect(stored.status).toBe(201);
		const again = await call('?commit=accepted', csv);
		expect(again.body.alreadySent).toBe(true);
		expect(again.body.storedNow).toBe(false);
		expect(again.status).toBe(200);
	});
});
