import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Db } from '$lib/server/db';
import { closeMailer, listOutbox, sendMail, withRecordLink } from '$lib/server/mail';
import { recordUrl } from '$lib/server/base-url';
import { outboxQuerySchema } from '$lib/schemas/outbox';
import { createSeededDb } from '../factories/db';

let db: Db;
const stamp = Date.now();

beforeAll(async () => {
	process.env.PUBLIC_BASE_URL = 'https://register.tidewater.example/';
	db = await createSeededDb();
	await sendMail(db, {
		to: `wren.${stamp}@saltmarsh.example`,
		subject: `Claim CL-2026-00077: decided`,
		text: 'Claim CL-2026-00077 is decided.\n\n',
		about: '/claims/77'
	});
	await sendMail(db, {
		to: `orin.${stamp}@ridgeline.example`,
		subject: `Shipment SH-2026-00012 from Tidewater Cellworks: 100% of the order`,
		text: 'Four modules.'
	});
});
afterAll(async () => {
	delete process.env.PUBLIC_BASE_URL;
	await closeMailer(db);
});

describe('every e-mail leads to its record', () => {
	it('adds the record’s full address as the last line, once, without trailing blank lines', () => {
		const text = withRecordLink('Body.\n\n\n', '/claims/12');
		expect(text).toBe(`Body.\n\nOpen it in Packledger: ${recordUrl('/claims/12')}\n`);
		expect(recordUrl('/claims/12')).toBe('https://register.tidewater.example/claims/12');
	});

	it('leaves a message about no record as it is', () =>
		expect(withRecordLink('Body.', undefined)).toBe('Body.'));

	it('a sent message carries the link in the outbox copy', async () => {
		const [m] = await listOutbox(db, { to: `wren.${stamp}@` });
		expect(m.text).toContain('Open it in Packledger: https://register.tidewater.example/claims/77');
	});
});

describe('the outbox can be searched by recipient and subject', () => {
	it('finds by part of the recipient', async () => {
		const found = await listOutbox(db, { to: `orin.${stamp}` });
		expect(found.map((m) => m.subject)).toEqual([
			'Shipment SH-2026-00012 from Tidewater Cellworks: 100% of the order'
		]);
	});

	it('finds by part of the subject, case aside (SQLite LIKE folds ASCII case)', async () => {
		const found = await listOutbox(db, { subject: 'cl-2026-00077' });
		expect(found.map((m) => m.toAddr)).toContain(`wren.${stamp}@saltmarsh.example`);
	});

	it('takes % and _ literally (a search for "%" is not "everything")', async () => {
		const pct = await listOutbox(db, { subject: '100%' });
		expect(pct).toHaveLength(1);
		const all = await listOutbox(db, {});
		expect(all.length).toBeGreaterThan(1);
		expect(await listOutbox(db, { subject: '%' })).toHaveLength(1);
		expect(await listOutbox(db, { subject: '_' })).toHaveLength(0);
	});

	it('combines both filters', async () => {
		expect(await listOutbox(db, { to: `orin.${stamp}`, subject: 'Claim' })).toHaveLength(0);
	});

	it('refuses a 200 KB filter with a message, before any query', () => {
		const r = outboxQuerySchema.safeParse({ to: 'x'.repeat(200_000) });
		expect(r.success).toBe(false);
		expect(r.error?.issues[0].message).toBe('The recipient is at most 254 characters.');
		const blank = outboxQuerySchema.parse({ to: '  ', subject: '' });
		expect(blank).toEqual({ to: undefined, subject: undefined });
	});
});
