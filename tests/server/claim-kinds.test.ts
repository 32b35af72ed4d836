/**
 * Every kind of claim (issue 13, item 4): on delivery for a module shipped to the dealer and
 * not installed, a module with no output filed without throughput, photos filed with the
 * claim, and `POST /api/claims` with the contract (201 with id and number; another
 * dealer's serial 404; a kind that does not fit the module refused, saying which kind fits).
 * Bad input stores nothing.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { and, count, eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Db } from '$lib/server/db';
import { attachments, claims, modules, organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { seedDemo } from '$lib/server/seed/demo';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { fileClaim } from '$lib/server/services/claim-filing';
import { getClaim as getClaimView } from '$lib/server/services/claims';
import type { ClaimAssessmentResult } from '$lib/server/services/claim-assessment';

/** The officer's view, whose assessment is never withheld. */
async function getClaim(...a: Parameters<typeof getClaimView>) {
	const v = await getClaimView(...a);
	return { ...v, assessment: v.assessment as ClaimAssessmentResult };
}
import { decideClaim, moveClaim } from '$lib/server/services/claim-workflow';
import { replaceModule } from '$lib/server/services/claim-replacement';
import { faultsFor } from '$lib/domain/claim-workflow';
import { POST as claimsPost } from '../../src/routes/api/claims/+server';
import { actorFor } from '../factories/db';

// A 1×1 PNG (the PNG signature and chunks of the W3C PNG specification's smallest image).
const PNG = Buffer.from(
	'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNkYPhfDwAChwGA60e6kgAAAABJRU5ErkJggg==',
	'base64'
);
const NOW = new Date('2026-11-25T10:00:00Z');

let db: Db;
let saltmarsh: Actor, ridgeline: Actor, officer: Actor;
let saltShipped: string[], ridgeShipped: string[], saltInService: string;

const claimCount = async () => (await db.select({ n: count() }).from(claims))[0].n;
const stateOf = async (serial: string) =>
	(await db.select({ s: modules.state }).from(modules).where(eq(modules.serial, serial)))[0].s;

function post(actor: Actor | null, body: unknown) {
	return claimsPost({
		locals: { user: actor },
		url: new URL('http://localhost/api/claims'),
		params: {},
		request: new Request('http://localhost/api/claims', {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify(body)
		})
	} as never);
}

async function shippedOf(dealer: string) {
	const [org] = await db.select().from(organisations).where(eq(organisations.name, dealer));
	return (
		await db
			.select({ serial: modules.serial })
			.from(modules)
			.where(and(eq(modules.dealerOrgId, org.id), eq(modules.state, 'shipped')))
			.orderBy(modules.serial)
	).map((r) => r.serial);
}

beforeAll(async () => {
	process.env.DATABASE_URL = `file:${join(mkdtempSync(join(tmpdir(), 'packledger-kinds-')), 'k.db')}`;
	const { getDb } = await import('$lib/server/db');
	db = await getDb();
	await seedDemo(db, 'test-password-123');
	await seedDemoFleet(db);
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	ridgeline = await actorFor(db, 'dealer@ridgeline.example');
	officer = await actorFor(db, 'warranty@tidewater.example');
	saltShipped = await shippedOf('Saltmarsh Solar');
	ridgeShipped = await shippedOf('Ridgeline Off-Grid Supply');
	const [c] = await db
		.select({ serial: modules.serial })
		.from(modules)
		.where(
			and(eq(modules.state, 'commissioned'), eq(modules.dealerOrgId, saltmarsh.organisationId!))
		)
		.orderBy(modules.serial)
		.limit(1);
	saltInService = c.serial;
}, 120_000);

describe('the fault list follows the kind', () => {
	it('offers on delivery only the faults found on delivery', () => {
		expect(faultsFor('on-delivery')).toEqual([
			'no_output',
			'damaged_in_transport',
			'wrong_or_incomplete'
		]);
		expect(faultsFor('in-service')).toEqual([
			'capacity_fade',
			'no_output',
			'runs_hot',
			'imbalance'
		]);
	});
});

describe('POST /api/claims', () => {
	it('files an on-delivery claim: 201 with id and number, no system, module under claim', async () => {
		const res = await post(ridgeline, {
			kind: 'on-delivery',
			serials: [ridgeShipped[0]],
			fault: 'damaged_in_transport',
			observedOn: '2026-11-24',
			description: 'The case is cracked at one corner and a terminal cover is missing.'
		});
		expect(res.status).toBe(201);
		const body = await res.json();
		expect(body.id).toBeGreaterThan(0);
		expect(body.number).toMatch(/^CL-\d{4}-\d{4}$/);
		const [row] = await db.select().from(claims).where(eq(claims.id, body.id));
		expect(row).toMatchObject({
			kind: 'on-delivery',
			systemId: null,
			faultCode: 'damaged_in_transport',
			observedOn: '2026-11-24'
		});
		expect(await stateOf(ridgeShipped[0])).toBe('claim_open');
		// Without photos the assessment asks for them.
		const view = await getClaim(db, officer, body.id);
		expect(view.assessment.recommendation).toBe('need-evidence');
		expect(view.assessment.reasons.join(' ')).toMatch(/needs: .*photos of the module/);
	});

	it('answers another dealer\u2019s serial exactly like an unknown one (404) and stores nothing', async () => {
		const before = await claimCount();
		const res = await post(saltmarsh, {
			kind: 'on-delivery',
			serials: [ridgeShipped[1]],
			fault: 'damaged_in_transport',
			observedOn: '2026-11-24',
			description: 'Trying to claim a module of another dealer.'
		});
		expect(res.status).toBe(404);
		expect((await res.json()).message).toMatch(/No module .* is in the register/);
		expect(await claimCount()).toBe(before);
	});

	it('refuses an on-delivery claim on a commissioned module, naming the kind that fits', async () => {
		const before = await claimCount();
		const res = await post(saltmarsh, {
			kind: 'on-delivery',
			serials: [saltInService],
			fault: 'no_output',
			observedOn: '2026-11-24',
			description: 'The module shows no voltage at all.'
		});
		expect(res.status).toBe(409);
		expect((await res.json()).message).toMatch(/in service.*kind "in-service"/);
		expect(await claimCount()).toBe(before);
		expect(await stateOf(saltInService)).toBe('commissioned');
	});

	it('refuses a fault the kind cannot file, a missing kind, a date after today, a 200 KB field', async () => {
		const before = await claimCount();
		const base = {
			kind: 'on-delivery',
			serials: [saltShipped[0]],
			fault: 'damaged_in_transport',
			observedOn: '2026-11-24',
			description: 'The case is dented on the long side.'
		};
		for (const bad of [
			{ ...base, fault: 'capacity_fade' },
			{ ...base, kind: undefined },
			{ ...base, kind: 'warranty' },
			{ ...base, observedOn: '2026-02-30' },
			{ ...base, description: 'x'.repeat(200_000) },
			{ ...base, serials: [] }
		]) {
			const res = await post(saltmarsh, bad);
			expect(res.status, JSON.stringify(bad).slice(0, 80)).toBe(400);
			expect((await res.json()).message).toBeTruthy();
		}
		const future = await post(saltmarsh, { ...base, observedOn: '2999-01-01' });
		expect(future.status).toBe(400);
		expect(await claimCount()).toBe(before);
		expect(await stateOf(saltShipped[0])).toBe('shipped');
	});
});

describe('filing with photos and without throughput', () => {
	it('files a no-output claim in service without throughput; the assessment says what it needs', async () => {
		const c = await fileClaim(
			db,
			saltmarsh,
			{
				kind: 'in-service',
				serials: [saltInService],
				fault: 'no_output',
				observedOn: '2026-11-20',
				evidence: { description: 'The module gives no output; the others in the bank are fine.' }
			},
			NOW
		);
		const view = await getClaim(db, officer, c.id, NOW);
		expect(view.assessment.recommendation).toBe('need-evidence');
		expect(view.assessment.reasons.join(' ')).toMatch(/no throughput is needed/);
		expect(view.assessment.reasons.join(' ')).toMatch(
			/terminal voltage, measured with the module isolated/
		);
	});

	it('refuses a capacity claim without throughput, storing nothing', async () => {
		const before = await claimCount();
		await expect(
			fileClaim(db, saltmarsh, {
				kind: 'in-service',
				serials: [saltInService],
				fault: 'capacity_fade',
				observedOn: '2026-11-20',
				evidence: { description: 'Capacity is down a lot this year.' }
			})
		).rejects.toMatchObject({ status: 400 });
		expect(await claimCount()).toBe(before);
	});

	it('stores the photos filed with an on-delivery claim; a file that is not an image stores nothing', async () => {
		const before = await claimCount();
		await expect(
			fileClaim(db, saltmarsh, {
				kind: 'on-delivery',
				serials: [saltShipped[1]],
				fault: 'damaged_in_transport',
				observedOn: '2026-11-24',
				evidence: { description: 'The case is dented on the long side.' },
				photos: [
					{ name: 'dent.png', type: 'image/png', bytes: new Uint8Array(Buffer.from('<html>')) }
				]
			})
		).rejects.toMatchObject({ status: 400 });
		expect(await claimCount()).toBe(before);

		const c = await fileClaim(
			db,
			saltmarsh,
			{
				kind: 'on-delivery',
				serials: [saltShipped[1]],
				fault: 'damaged_in_transport',
				observedOn: '2026-11-24',
				evidence: { description: 'The case is dented on the long side.' },
				photos: [{ name: 'dent.png', type: 'image/png', bytes: new Uint8Array(PNG) }]
			},
			NOW
		);
		const [{ n }] = await db
			.select({ n: count() })
			.from(attachments)
			.where(and(eq(attachments.ownerKind, 'claim'), eq(attachments.ownerId, c.id)));
		expect(n).toBe(1);
		const view = await getClaim(db, officer, c.id, NOW);
		// This unit of Saltmarsh's stock was shipped long before: later than the 14 days.
		expect(view.assessment.reasons.join(' ')).toMatch(/1 photo is attached/);
		expect(view.assessment.reasons.join(' ')).toMatch(
			/came \d+ days after the shipment of \d{4}-\d{2}-\d{2}, later than the 14 days/
		);
		expect(view.assessment.recommendation).toBe('need-evidence');

		// Declined: the module is the dealer's stock again, not "in service".
		await moveClaim(db, officer, c.id, { to: 'in_review' }, NOW);
		await decideClaim(
			db,
			officer,
			c.id,
			{ decision: 'not_covered', reason: 'The dent is cosmetic; the module tested fine here.' },
			NOW
		);
		expect(await stateOf(saltShipped[1])).toBe('shipped');
	});

	it('covered on delivery: the replacement goes to the dealer as stock (shipped), not into service', async () => {
		const failedSerial = ridgeShipped[2];
		const res = await post(ridgeline, {
			kind: 'on-delivery',
			serials: [failedSerial],
			fault: 'damaged_in_transport',
			observedOn: '2026-11-24',
			description: 'The case arrived crushed on one side; the module was not unpacked further.'
		});
		expect(res.status).toBe(201);
		const { id } = await res.json();
		const [failed] = await db.select().from(modules).where(eq(modules.serial, failedSerial));
		const [spare] = await db
			.select()
			.from(modules)
			.where(and(eq(modules.state, 'in_stock'), eq(modules.modelId, failed.modelId)))
			.orderBy(modules.serial)
			.limit(1);
		await moveClaim(db, officer, id, { to: 'in_review' }, NOW);
		await decideClaim(
			db,
			officer,
			id,
			{ decision: 'covered', reason: 'The carrier confirmed the crushed pallet on delivery.' },
			NOW
		);
		await replaceModule(db, officer, id, failedSerial, spare.serial, undefined, NOW);
		const [repl] = await db.select().from(modules).where(eq(modules.id, spare.id));
		expect(repl).toMatchObject({
			state: 'shipped',
			systemId: null,
			commissionedAt: null,
			dealerOrgId: ridgeline.organisationId
		});
		expect(repl.shippedAt?.getTime()).toBe(NOW.getTime());
		expect(await stateOf(failedSerial)).toBe('returned');
	});
});
