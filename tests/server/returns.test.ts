/**
 * Returns that can be followed (issue 13, item 3): a recorded replacement gives the failed
 * module a return authorisation number (RA-{year}-{NNNN}); the workshop scans it in with its
 * condition on arrival, inspects it once, then reworks, keeps or scraps it — each step on the
 * module's timeline, audited and e-mailed to the filer with the claim's address. Steps out of
 * order, a second inspection and dealers are refused with nothing stored.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, asc, count, eq, like, sql } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Db } from '$lib/server/db';
import { auditLog, claimModules, mailOutbox, moduleEvents, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { seedDemo } from '$lib/server/seed/demo';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { closeMailer } from '$lib/server/mail';
import { fileClaim } from '$lib/server/services/claim-filing';
import { getClaim } from '$lib/server/services/claims';
import { decideClaim, moveClaim, replaceModule } from '$lib/server/services/claim-workflow';
import { actOnReturn, findReturn, listOpenReturns } from '$lib/server/services/returns';
import { POST as returnsPost } from '../../src/routes/api/returns/[serial]/+server';
import { actorFor } from '../factories/db';

const NOW = new Date('2026-11-25T10:00:00Z');
let db: Db;
let saltmarsh: Actor, officer: Actor, workshop: Actor;

const stateOf = async (serial: string) =>
	(await db.select({ s: modules.state }).from(modules).where(eq(modules.serial, serial)))[0].s;
const auditCount = async () => (await db.select({ n: count() }).from(auditLog))[0].n;

function post(actor: Actor | null, serial: string, body: unknown) {
	return returnsPost({
		locals: { user: actor },
		url: new URL(`http://localhost/api/returns/${serial}`),
		params: { serial },
		request: new Request(`http://localhost/api/returns/${serial}`, {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify(body)
		})
	} as never);
}

/** A covered in-service claim on one of Saltmarsh's commissioned modules, with its replacement recorded. */
async function replacedModule() {
	const [failed] = await db
		.select({ serial: modules.serial, modelId: modules.modelId })
		.from(modules)
		.where(
			and(
				eq(modules.state, 'commissioned'),
				eq(modules.dealerOrgId, saltmarsh.organisationId!),
				sql`NOT EXISTS (SELECT 1 FROM claim_modules cm WHERE cm.module_id = ${modules.id})`
			)
		)
		.orderBy(asc(modules.serial))
		.limit(1);
	const [spare] = await db
		.select({ serial: modules.serial })
		.from(modules)
		.where(and(eq(modules.state, 'in_stock'), eq(modules.modelId, failed.modelId)))
		.orderBy(asc(modules.serial))
		.limit(1);
	const c = await fileClaim(
		db,
		saltmarsh,
		{
			kind: 'in-service',
			serials: [failed.serial],
			fault: 'no_output',
			observedOn: '2026-11-20',
			evidence: { description: 'The module gives no output; the others in the bank are fine.' }
		},
		NOW
	);
	await moveClaim(db, officer, c.id, { to: 'in_review' }, NOW);
	await decideClaim(
		db,
		officer,
		c.id,
		{ decision: 'covered', reason: 'Zero volts at the terminals, measured isolated on site.' },
		NOW
	);
	const r = await replaceModule(db, officer, c.id, failed.serial, spare.serial, undefined, NOW);
	return { claimId: c.id, reference: c.reference, failed: failed.serial, ra: r.raNumber };
}

beforeAll(async () => {
	process.env.DATABASE_URL = `file:${join(mkdtempSync(join(tmpdir(), 'packledger-returns-')), 'r.db')}`;
	const { getDb } = await import('$lib/server/db');
	db = await getDb();
	await seedDemo(db, 'test-password-123');
	await seedDemoFleet(db);
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	officer = await actorFor(db, 'warranty@tidewater.example');
	workshop = await actorFor(db, 'workshop@tidewater.example');
}, 120_000);
afterAll(async () => closeMailer(db));

describe('a return, step by step', () => {
	it('numbers the return in its own yearly sequence and follows it to the scrap bin', async () => {
		const first = await replacedModule();
		const second = await replacedModule();
		// The assembler's calendar year of 25 November 2026, numbered from 1 (RA-2026-0001).
		expect(first.ra).toMatch(/^RA-2026-\d{4}$/);
		expect(Number(second.ra.slice(-4))).toBe(Number(first.ra.slice(-4)) + 1);
		expect(await stateOf(first.failed)).toBe('returned');
		const [mail] = await db
			.select()
			.from(mailOutbox)
			.where(like(mailOutbox.subject, `%${first.reference}%replacement%`));
		expect(mail?.text ?? '').toContain(first.ra);

		expect((await findReturn(db, workshop, first.failed)).actions).toEqual(['receive']);
		expect((await listOpenReturns(db, workshop)).map((r) => r.raNumber)).toContain(first.ra);

		const received = await actOnReturn(
			db,
			workshop,
			first.failed,
			{ action: 'receive', condition: 'case_damaged', note: 'Corner crushed.' },
			undefined,
			NOW
		);
		expect(received).toMatchObject({ state: 'received_back', step: 'received' });
		const view = await findReturn(db, workshop, first.failed);
		expect(view).toMatchObject({ quarantine: true, arrivalCondition: 'case_damaged' });

		await actOnReturn(
			db,
			officer,
			first.failed,
			{ action: 'inspect', cause: 'mechanical_damage', findings: 'Case crushed; two cells open.' },
			undefined,
			NOW
		);
		expect(await stateOf(first.failed)).toBe('inspected');
		const scrapped = await actOnReturn(
			db,
			workshop,
			first.failed,
			{ action: 'scrap', reason: 'Cells open circuit after crushing.' },
			undefined,
			NOW
		);
		expect(scrapped).toMatchObject({ state: 'scrapped', step: 'closed' });
		const [row] = await db
			.select({ lifecycle: modules.lifecycleStatus, id: modules.id })
			.from(modules)
			.where(eq(modules.serial, first.failed));
		const kinds = (
			await db.select().from(moduleEvents).where(eq(moduleEvents.moduleId, row.id))
		).map((e) => e.kind);
		expect(kinds).toEqual(
			expect.arrayContaining([
				'return_authorised',
				'return_received',
				'return_inspected',
				'scrapped'
			])
		);
		const subjects = (
			await db
				.select()
				.from(mailOutbox)
				.where(like(mailOutbox.subject, `Return ${first.ra}%`))
		).map((m) => m.subject);
		expect(subjects).toEqual([
			`Return ${first.ra} (claim ${first.reference}): ${first.failed} received at our workshop`,
			`Return ${first.ra} (claim ${first.reference}): ${first.failed} inspected`,
			`Return ${first.ra} (claim ${first.reference}): ${first.failed} scrapped`
		]);
		const mails = await db
			.select()
			.from(mailOutbox)
			.where(like(mailOutbox.subject, `Return ${first.ra}%`));
		for (const m of mails) expect(m.text).toContain(`/claims/${first.claimId}`);

		const claimView = await getClaim(db, saltmarsh, first.claimId, NOW);
		expect(claimView.modules[0]).toMatchObject({
			raNumber: first.ra,
			arrivalCondition: 'case_damaged',
			returnOutcome: 'scrapped'
		});
	});

	it('keeps a module for analysis and reworks it later, back to built', async () => {
		const r = await replacedModule();
		const act = (input: Parameters<typeof actOnReturn>[3]) =>
			actOnReturn(db, workshop, r.failed, input, undefined, NOW);
		await act({ action: 'receive', condition: 'intact' });
		await act({
			action: 'inspect',
			cause: 'no_fault_found',
			findings: 'Full capacity on the rig.'
		});
		expect(await act({ action: 'keep', note: 'For the BMS log review.' })).toMatchObject({
			state: 'kept_for_analysis'
		});
		expect(
			await act({ action: 'rework', work: 'BMS board replaced and firmware loaded.' })
		).toMatchObject({ state: 'built' });
		await expect(act({ action: 'scrap', reason: 'Too late: already reworked.' })).rejects.toThrow(
			/finished \(reworked\)/
		);
	});
});

describe('bad input stores nothing', () => {
	it('refuses a module not on its way back, a step out of order and a second inspection', async () => {
		const r = await replacedModule();
		const [inService] = await db
			.select({ serial: modules.serial })
			.from(modules)
			.where(eq(modules.state, 'commissioned'))
			.limit(1);
		const before = await auditCount();
		await expect(
			actOnReturn(db, workshop, inService.serial, { action: 'receive', condition: 'intact' })
		).rejects.toThrow(/is not on its way back/);
		await expect(
			actOnReturn(db, workshop, r.failed, {
				action: 'inspect',
				cause: 'no_fault_found',
				findings: 'Nothing wrong with it.'
			})
		).rejects.toThrow(/has not arrived yet: scan it in first/);
		await expect(
			actOnReturn(db, workshop, r.failed, { action: 'scrap', reason: 'Scrap before it arrives.' })
		).rejects.toThrow(/must be received and inspected/);
		expect(await auditCount()).toBe(before);
		expect(await stateOf(r.failed)).toBe('returned');

		await actOnReturn(db, workshop, r.failed, { action: 'receive', condition: 'intact' });
		await expect(
			actOnReturn(db, workshop, r.failed, { action: 'receive', condition: 'intact' })
		).rejects.toThrow(/already received; it is not on its way back/);
		await actOnReturn(db, workshop, r.failed, {
			action: 'inspect',
			cause: 'no_fault_found',
			findings: 'Nothing wrong with it.'
		});
		const afterFirst = await auditCount();
		await expect(
			actOnReturn(db, workshop, r.failed, {
				action: 'inspect',
				cause: 'connection_fault',
				findings: 'A second opinion, refused.'
			})
		).rejects.toThrow(/already inspected; an inspection is recorded once/);
		expect(await auditCount()).toBe(afterFirst);
		const [link] = await db
			.select({ cause: claimModules.returnCause })
			.from(claimModules)
			.where(eq(claimModules.raNumber, r.ra));
		expect(link.cause).toBe('no_fault_found');
	});

	it('answers dealers 403 and bad bodies 400 through the API, naming what to do', async () => {
		const r = await replacedModule();
		const before = await auditCount();
		// The guard refuses a dealer before the body is read (SvelteKit's 403).
		await expect(
			post(saltmarsh, r.failed, { action: 'receive', condition: 'intact' })
		).rejects.toMatchObject({ status: 403 });
		await expect(
			actOnReturn(db, saltmarsh, r.failed, { action: 'receive', condition: 'intact' })
		).rejects.toThrow(/workshop and warranty staff/);
		const unknownAction = await post(workshop, r.failed, { action: 'bury' });
		expect(unknownAction.status).toBe(400);
		expect((await unknownAction.json()).issues[0].message).toMatch(
			/receive, inspect, rework, keep or scrap/
		);
		const noCondition = await post(workshop, r.failed, { action: 'receive' });
		expect(noCondition.status).toBe(400);
		const huge = await post(workshop, r.failed, {
			action: 'inspect',
			cause: 'no_fault_found',
			findings: 'x'.repeat(200_000)
		});
		expect(huge.status).toBe(400);
		const unknown = await post(workshop, 'PL48-26-999999X', {
			action: 'receive',
			condition: 'intact'
		});
		expect(unknown.status).toBe(404);
		expect(await auditCount()).toBe(before);

		const ok = await post(workshop, r.failed, { action: 'receive', condition: 'intact' });
		expect(ok.status).toBe(200);
		expect(await ok.json()).toMatchObject({ raNumber: r.ra, state: 'received_back' });
	});
});
