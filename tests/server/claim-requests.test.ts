/**
 * Evidence requests the dealer sees, and the officer's queue searched by serial (issue 13,
 * item 5): asking for evidence is one step from a filed claim, says what is needed, is shown
 * on the claim and e-mailed with the claim's address; `?serial=` finds claims by a whole
 * serial or its beginning, within the dealer's own claims, and refuses unbounded or odd input.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, asc, count, eq, like, sql } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Db } from '$lib/server/db';
import { auditLog, claims, mailOutbox, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { seedDemo } from '$lib/server/seed/demo';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { closeMailer } from '$lib/server/mail';
import { fileClaim } from '$lib/server/services/claim-filing';
import { getClaim } from '$lib/server/services/claims';
import { listClaims } from '$lib/server/services/claim-queue';
import { addEvidence, moveClaim } from '$lib/server/services/claim-workflow';
import { GET as claimsGet } from '../../src/routes/api/claims/+server';
import { actorFor } from '../factories/db';

const NOW = new Date('2026-11-25T10:00:00Z');
let db: Db;
let saltmarsh: Actor, ridgeline: Actor, officer: Actor;

async function fileFor(dealer: Actor) {
	const [m] = await db
		.select({ serial: modules.serial })
		.from(modules)
		.where(
			and(
				eq(modules.state, 'commissioned'),
				eq(modules.dealerOrgId, dealer.organisationId!),
				sql`NOT EXISTS (SELECT 1 FROM claim_modules cm WHERE cm.module_id = ${modules.id})`
			)
		)
		.orderBy(asc(modules.serial))
		.limit(1);
	const c = await fileClaim(
		db,
		dealer,
		{
			kind: 'in-service',
			serials: [m.serial],
			fault: 'no_output',
			observedOn: '2026-11-20',
			evidence: { description: 'The module gives no output; the others in the bank are fine.' }
		},
		NOW
	);
	return { ...c, serial: m.serial };
}

function get(actor: Actor, query: string) {
	return claimsGet({
		locals: { user: actor },
		url: new URL(`http://localhost/api/claims${query}`),
		params: {},
		request: new Request(`http://localhost/api/claims${query}`)
	} as never);
}

beforeAll(async () => {
	process.env.DATABASE_URL = `file:${join(mkdtempSync(join(tmpdir(), 'packledger-requests-')), 'q.db')}`;
	const { getDb } = await import('$lib/server/db');
	db = await getDb();
	await seedDemo(db, 'test-password-123');
	await seedDemoFleet(db);
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	ridgeline = await actorFor(db, 'dealer@ridgeline.example');
	officer = await actorFor(db, 'warranty@tidewater.example');
}, 120_000);
afterAll(async () => closeMailer(db));

describe('asking for evidence', () => {
	it('goes from filed to waiting in one step, shows the request to the dealer and mails it with the link', async () => {
		const c = await fileFor(saltmarsh);
		const before = (await db.select({ n: count() }).from(auditLog))[0].n;
		await expect(
			moveClaim(db, officer, c.id, { to: 'awaiting_evidence', comment: 'More' }, NOW)
		).rejects.toThrow(/Say which evidence you need/);
		expect((await db.select({ n: count() }).from(auditLog))[0].n).toBe(before);

		const ask = 'Measure the open-circuit voltage with the module isolated, and send a photo.';
		await moveClaim(db, officer, c.id, { to: 'awaiting_evidence', comment: ask }, NOW);
		const view = await getClaim(db, saltmarsh, c.id, NOW);
		expect(view.claim.state).toBe('awaiting_evidence');
		expect(view.claim.evidenceRequest).toEqual({ text: ask, at: NOW });
		const [mail] = await db
			.select()
			.from(mailOutbox)
			.where(like(mailOutbox.subject, `Claim ${c.reference}: Waiting for evidence`));
		expect(mail.text).toContain(ask);
		expect(mail.text).toContain(`/claims/${c.id}`);

		// Evidence added: back under review, and the request is no longer shown.
		await addEvidence(
			db,
			saltmarsh,
			c.id,
			{ comment: 'Measured 0.0 V across the terminals, module isolated.' } as never,
			NOW
		);
		const after = await getClaim(db, saltmarsh, c.id, NOW);
		expect(after.claim.state).toBe('in_review');
		expect(after.claim.evidenceRequest).toBeNull();
	});

	it('links every e-mail about a claim to the claim', async () => {
		const rows = await db
			.select({ subject: mailOutbox.subject, text: mailOutbox.text })
			.from(mailOutbox)
			.where(like(mailOutbox.subject, 'Claim %'));
		expect(rows.length).toBeGreaterThan(0);
		for (const r of rows) expect(r.text).toMatch(/\/claims\/\d+/);
	});
});

describe('searching the queue by serial', () => {
	it('finds a claim by its whole serial or its beginning, and a dealer only among its own', async () => {
		const salt = await fileFor(saltmarsh);
		const ridge = await fileFor(ridgeline);
		const exact = await listClaims(db, officer, { serial: salt.serial }, NOW);
		expect(exact.items.map((i) => i.reference)).toEqual([salt.reference]);
		const prefix = salt.serial.slice(0, 9);
		const byPrefix = await listClaims(db, officer, { serial: prefix, pageSize: 100 }, NOW);
		expect(byPrefix.items.map((i) => i.reference)).toContain(salt.reference);
		const [{ n }] = await db
			.select({ n: count() })
			.from(claims)
			.where(
				sql`EXISTS (SELECT 1 FROM claim_modules cm JOIN modules m ON m.id = cm.module_id WHERE cm.claim_id = ${claims.id} AND m.serial LIKE ${prefix + '%'})`
			);
		expect(byPrefix.total).toBe(n);
		// Ridgeline searching for Saltmarsh's serial finds nothing; its own, it finds.
		expect((await listClaims(db, ridgeline, { serial: salt.serial }, NOW)).total).toBe(0);
		expect(
			(await listClaims(db, ridgeline, { serial: ridge.serial }, NOW)).items.map((i) => i.reference)
		).toEqual([ridge.reference]);
		// Lower case typed is the same serial.
		const res = await get(officer, `?serial=${salt.serial.toLowerCase()}`);
		expect(res.status).toBe(200);
		expect((await res.json()).items.map((i: { reference: string }) => i.reference)).toEqual([
			salt.reference
		]);
	});

	it('refuses a 200 KB or odd search with a message', async () => {
		const huge = await get(officer, `?serial=${'A'.repeat(200_000)}`);
		expect(huge.status).toBe(400);
		expect((await huge.json()).message).toMatch(/at most 40 characters/);
		const odd = await get(officer, `?serial=${encodeURIComponent("PL48%' OR 1=1")}`);
		expect(odd.status).toBe(400);
		expect((await odd.json()).message).toMatch(/letters, digits and hyphens only/);
	});
});
