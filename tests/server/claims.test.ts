import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, count, eq, like } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	auditLog,
	claimEvents,
	claims,
	logMappings,
	mailOutbox,
	moduleEvents,
	modules,
	organisations,
	systemSlots
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { closeMailer } from '$lib/server/mail';
import { claimFigures } from '$lib/server/services/dashboard';
import { UNKNOWN_SERIAL } from '$lib/server/services/modules';
import { fileClaim } from '$lib/server/services/claim-filing';
import { getClaim, loadClaim } from '$lib/server/services/claims';
import { listClaims } from '$lib/server/services/claim-queue';
import { readInverterLog } from '$lib/server/services/claim-log';
import {
	addEvidence,
	commentOnClaim,
	decideClaim,
	moveClaim,
	recordReturnInspection,
	replaceModule
} from '$lib/server/services/claim-workflow';
import { assessmentFor } from '$lib/server/services/claim-assessment';
import { actOnReturn } from '$lib/server/services/returns';
import { assessClaim } from '$lib/domain/warranty';
import { claimEvidenceSchema } from '$lib/schemas/warranty-assess';
import { formatSerial } from '$lib/domain/serial';
import { POST as assessPost } from '../../src/routes/api/warranty/assess/+server';
import { actorFor, createSeededDb } from '../factories/db';
import { assignToDealer, makeModules } from '../factories/modules';
import {
	commissionedSystem as makeCommissionedSystem,
	TERMS,
	type CommissionedSystemOptions
} from '../factories/claims';

const NOW = new Date('2026-03-15T10:00:00Z');
const DAY = 86_400_000;

let db: Db;
let admin: Actor, workshop: Actor, warranty: Actor, tech: Actor, saltmarsh: Actor, ridgeline: Actor;

beforeAll(async () => {
	db = await createSeededDb();
	[admin, workshop, warranty, tech, saltmarsh, ridgeline] = await Promise.all(
		[
			'admin@tidewater.example',
			'workshop@tidewater.example',
			'warranty@tidewater.example',
			'tech@tidewater.example',
			'dealer@saltmarsh.example',
			'dealer@ridgeline.example'
		].map((e) => actorFor(db, e))
	);
});
afterAll(async () => closeMailer(db));

/** A commissioned system of `count` TC-HC-48 modules in one string (see tests/factories/claims.ts). */
const commissionedSystem = (opts: CommissionedSystemOptions = {}) =>
	makeCommissionedSystem(db, { workshop, admin, tech }, opts);

/** Spare modules of a model, in stock at the assembler (or shipped to a dealer). */
async function spares(code = 'TC-HC-48', n = 1, shippedTo?: string) {
	const serials = await makeModules(db, workshop, { code, count: n });
	if (shippedTo) await assignToDealer(db, serials, shippedTo);
	else
		for (const s of serials)
			await db.update(modules).set({ state: 'in_stock' }).where(eq(modules.serial, s));
	return serials;
}

/** 3 000 equivalent full cycles per module over 4 modules of 2 300 Wh, 40 Ah of 46.5 Ah left: below the promise, so cover. */
const rawCoverEvidence = {
	measuredCapacityAh: '40',
	measuredAtC: '25',
	throughputWh: String(4 * 2300 * 3000),
	avgCellTempC: '24',
	maxCellTempC: '31',
	description: 'Capacity dropped sharply over the winter.'
};
/** Evidence as a form sends it, read with the filing form's schema (the service takes parsed input). */
const evidenceOf = (raw: Record<string, string>) => {
	const r = claimEvidenceSchema.safeParse(raw);
	if (!r.success) throw new Error(r.error.issues.map((i) => i.message).join(' '));
	return r.data;
};
const coverEvidence = evidenceOf(rawCoverEvidence);

const mailsAbout = async (reference: string) =>
	(
		await db
			.select()
			.from(mailOutbox)
			.where(like(mailOutbox.subject, `Claim ${reference}%`))
	).map((m) => ({ to: m.toAddr, subject: m.subject }));
const counts = async () => ({
	claims: (await db.select({ n: count() }).from(claims))[0].n,
	events: (await db.select({ n: count() }).from(claimEvents))[0].n,
	audit: (await db.select({ n: count() }).from(auditLog).where(like(auditLog.action, 'claim.%')))[0]
		.n
});
const stateOf = async (serial: string) =>
	(await db.select().from(modules).where(eq(modules.serial, serial)))[0];

describe('filing a claim', () => {
	it('lets a dealer claim its own commissioned modules: modules under claim, events, audit and an e-mail', async () => {
		const sys = await commissionedSystem();
		const { reference, id } = await fileClaim(
			db,
			saltmarsh,
			{
				serials: [sys.serials[0], ` ${sys.serials[1]} `],
				fault: 'Capacity fade',
				evidence: coverEvidence
			},
			NOW
		);
		expect(reference).toMatch(/^CL-2026-\d{4}$/);
		for (const s of sys.serials.slice(0, 2)) {
			const m = await stateOf(s);
			expect(m.state).toBe('claim_open');
			const ev = await db
				.select()
				.from(moduleEvents)
				.where(and(eq(moduleEvents.moduleId, m.id), eq(moduleEvents.kind, 'claim_filed')));
			expect(ev[0].summary).toContain(reference);
		}
		expect((await stateOf(sys.serials[2])).state).toBe('commissioned');
		const claim = await loadClaim(db, saltmarsh, id);
		expect(claim.dealerOrgId).toBe(sys.dealerOrgId);
		expect(
			(await db.select().from(claimEvents).where(eq(claimEvents.claimId, id))).map((e) => e.toState)
		).toEqual(['filed']);
		expect(
			await db
				.select()
				.from(auditLog)
				.where(and(eq(auditLog.action, 'claim.file'), eq(auditLog.entityId, reference)))
		).toHaveLength(1);
		expect(await mailsAbout(reference)).toEqual([
			{ to: 'dealer@saltmarsh.example', subject: `Claim ${reference} received` }
		]);
	});

	it('numbers claims CL-year-NNNN without repeats, even when filed at the same moment', async () => {
		const a = await commissionedSystem();
		const b = await commissionedSystem();
		const [x, y] = await Promise.all([
			fileClaim(
				db,
				saltmarsh,
				{ serials: [a.serials[0]], fault: 'No output', evidence: coverEvidence },
				NOW
			),
			fileClaim(
				db,
				saltmarsh,
				{ serials: [b.serials[0]], fault: 'No output', evidence: coverEvidence },
				NOW
			)
		]);
		expect(x.reference).not.toBe(y.reference);
		expect(Math.abs(Number(x.reference.slice(-4)) - Number(y.reference.slice(-4)))).toBe(1);
	});

	it("answers another dealer's module exactly like an unknown serial, and stores nothing", async () => {
		const sys = await commissionedSystem({ dealer: 'Saltmarsh Solar' });
		const before = await counts();
		const foreign = fileClaim(
			db,
			ridgeline,
			{ serials: [sys.serials[0]], fault: 'Capacity fade', evidence: coverEvidence },
			NOW
		);
		await expect(foreign).rejects.toThrow(UNKNOWN_SERIAL(sys.serials[0]));
		await expect(foreign).rejects.toMatchObject({ status: 404 });
		// A well-formed serial nobody has answers with the same words and status.
		const unknown = formatSerial({ variant: '48', year: 2026, number: 999_999 });
		const err = await fileClaim(
			db,
			ridgeline,
			{ serials: [unknown], fault: 'Capacity fade', evidence: coverEvidence },
			NOW
		).catch((e) => e);
		const foreignErr = await foreign.catch((e) => e);
		expect([err.status, err.message.replace(unknown, 'S')]).toEqual([
			foreignErr.status,
			foreignErr.message.replace(sys.serials[0], 'S')
		]);
		expect(await counts()).toEqual(before);
		expect((await stateOf(sys.serials[0])).state).toBe('commissioned');
	});

	it('refuses modules not in service, and modules already on a claim', async () => {
		const [shipped] = await makeModules(db, workshop, { count: 1 });
		await assignToDealer(db, [shipped], 'Saltmarsh Solar');
		await expect(
			fileClaim(db, saltmarsh, { serials: [shipped], fault: 'Dead', evidence: coverEvidence }, NOW)
		).rejects.toThrow(/not in service/);
		const sys = await commissionedSystem();
		const first = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0]], fault: 'Dead module', evidence: coverEvidence },
			NOW
		);
		const before = await counts();
		await expect(
			fileClaim(
				db,
				warranty,
				{
					serials: [sys.serials[1], sys.serials[0]],
					fault: 'Dead module',
					evidence: coverEvidence
				},
				NOW
			)
		).rejects.toThrow(`already on claim ${first.reference}`);
		expect(await counts()).toEqual(before);
		expect((await stateOf(sys.serials[1])).state).toBe('commissioned');
	});

	it('refuses modules of two systems in one claim', async () => {
		const a = await commissionedSystem();
		const b = await commissionedSystem();
		await expect(
			fileClaim(
				db,
				saltmarsh,
				{ serials: [a.serials[0], b.serials[0]], fault: 'Fade', evidence: coverEvidence },
				NOW
			)
		).rejects.toThrow(/different systems/);
	});

	it('refuses nonsense evidence with clear words and stores nothing', async () => {
		const sys = await commissionedSystem();
		const before = await counts();
		const file = async (evidence: Record<string, string>, extra: object = {}) =>
			fileClaim(
				db,
				saltmarsh,
				{
					serials: [sys.serials[0]],
					fault: 'Fade',
					evidence: evidenceOf({ ...rawCoverEvidence, ...evidence }),
					...extra
				},
				NOW
			);
		await expect(file({ measuredCapacityAh: '-5' })).rejects.toThrow(
			'Measured capacity must not be negative.'
		);
		await expect(file({ avgCellTempC: '400' })).rejects.toThrow(
			'Average cell temperature must be between -40 and 120 °C.'
		);
		await expect(file({ throughputWh: '', cycleCount: '' })).rejects.toThrow(
			'Give the energy throughput (Wh) or the cycle count.'
		);
		// 10 GWh over four 2.3 kWh modules in four years is ~745 cycles a day each.
		await expect(file({ throughputWh: '10000000000' })).rejects.toThrow(
			/cannot do more than 36 a day/
		);
		await expect(
			file(
				{},
				{ log: { rows: 10, firstAt: '2026-01-01 00:00', lastAt: '2027-05-01 00:00', problems: [] } }
			)
		).rejects.toThrow(/after today/);
		expect(await counts()).toEqual(before);
		expect((await stateOf(sys.serials[0])).state).toBe('commissioned');
	});
});

describe('assessment from the warranty snapshot', () => {
	it('uses the terms and start date recorded at commissioning, and shares system throughput over the modules', async () => {
		// Terms unlike the model's current ones prove the snapshot is read.
		const snapshot = {
			years: 12,
			ratedCycles: 10000,
			endRetentionPct: 70,
			referenceTempC: 25,
			hotTempC: 55,
			hotRatedCycles: 2000
		};
		const sys = await commissionedSystem({ terms: snapshot, startsOn: '2023-06-10' });
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[2]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		const result = await assessmentFor(db, await loadClaim(db, warranty, id));
		expect(result.input).toMatchObject({
			terms: snapshot,
			commissionedOn: '2023-06-10',
			claimedOn: '2026-03-15',
			ratedCapacityAh: 46.5,
			usableWh: 2300,
			measuredCapacityAh: 40,
			throughputWh: 2300 * 3000,
			avgCellTempC: 24,
			stopChargeProven: true
		});
		const direct = assessClaim(result.input);
		expect(result).toMatchObject({
			recommendation: direct.recommendation,
			termEndsOn: '2035-06-10',
			equivalentFullCycles: 3000,
			promisedRetentionPct: direct.promisedRetentionPct,
			retentionPct: direct.retentionPct
		});
		expect(result.reasons).toEqual(expect.arrayContaining(direct.reasons));
		expect(result.reasons.join(' ')).toMatch(/whole system's.*4 modules.*6,900,000 Wh/);
		expect(result.recommendation).toBe('cover');
	});

	it("derates with the mean kinetic temperature of the log's profile and weighs the capacity test's temperature", async () => {
		const sys = await commissionedSystem();
		const profile = [
			{ tempC: 15, hours: 4000 },
			{ tempC: 45, hours: 4000 }
		];
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{
				serials: [sys.serials[3]],
				fault: 'Fade',
				evidence: { ...coverEvidence, measuredAtC: 9 },
				log: { rows: 8000, firstAt: null, lastAt: null, problems: [], temperatureProfile: profile }
			},
			NOW
		);
		const result = await assessmentFor(db, await loadClaim(db, warranty, id));
		expect(result.input.temperatureProfile).toEqual(profile);
		expect(result.input.measuredAtC).toBe(9);
		expect(result.temperatureBasis).toBe('profile');
		// Haynes (1971) MKT of 15/45 °C at the terms' Ea 43.64 kJ/mol ≈ 35.13 °C (calc, see the domain tests).
		expect(result.effectiveCellTempC).toBeCloseTo(35.13, 2);
		expect(result.reasons.join(' ')).toMatch(/below the 20 ± 5 °C reference band/);
	});

	it('uses a per-module throughput as given, and reports an unproven stop-charge signal', async () => {
		const sys = await commissionedSystem({ stopCharge: 'fail' });
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{
				serials: [sys.serials[0]],
				fault: 'Fade',
				evidence: evidenceOf({ ...rawCoverEvidence, throughputWh: '6900000' }),
				throughputScope: 'module'
			},
			NOW
		);
		const result = await assessmentFor(db, await loadClaim(db, warranty, id));
		expect(result.input.throughputWh).toBe(6900000);
		expect(result.input.stopChargeProven).toBe(false);
		expect(result.reasons.join(' ')).toMatch(/given for the module itself/);
		expect(result.reasons.join(' ')).toMatch(/stop-charge signal was not proven/);
	});
});

describe('workflow', () => {
	it('allows the listed moves only, by warranty staff only, with a timeline entry, audit and e-mail each time', async () => {
		const sys = await commissionedSystem();
		const { id, reference } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		await expect(moveClaim(db, saltmarsh, id, { to: 'in_review' }, NOW)).rejects.toMatchObject({
			status: 403
		});
		await expect(moveClaim(db, warranty, id, { to: 'closed' }, NOW)).rejects.toThrow(
			'is Filed and cannot move to Closed. From Filed it can go to Under review or Waiting for evidence.'
		);
		await expect(decideClaim(db, warranty, id, { decision: 'covered' }, NOW)).rejects.toThrow(
			/Move it to Under review first/
		);
		await moveClaim(db, warranty, id, { to: 'in_review', comment: 'Looking at it.' }, NOW);
		await expect(moveClaim(db, warranty, id, { to: 'covered' }, NOW)).rejects.toThrow(
			/is a decision/
		);
		await moveClaim(
			db,
			warranty,
			id,
			{ to: 'awaiting_evidence', comment: 'Send a capacity test report, please.' },
			NOW
		);
		await expect(decideClaim(db, warranty, id, { decision: 'covered' }, NOW)).rejects.toThrow(
			/Waiting for evidence/
		);
		// The dealer adds evidence: the claim goes back under review on its own.
		await addEvidence(
			db,
			saltmarsh,
			id,
			{ measuredCapacityAh: 39.5, comment: 'Report attached by post.' },
			NOW
		);
		const claim = await loadClaim(db, warranty, id);
		expect(claim.state).toBe('in_review');
		expect(JSON.parse(claim.evidence).measuredCapacityAh).toBe(39.5);
		await expect(
			addEvidence(db, ridgeline, id, { measuredCapacityAh: 1 }, NOW)
		).rejects.toMatchObject({ status: 404 });
		await commentOnClaim(db, saltmarsh, id, 'The owner asks how long this takes.', NOW);

		const events = await db.select().from(claimEvents).where(eq(claimEvents.claimId, id));
		expect(events.map((e) => [e.fromState, e.toState])).toEqual([
			[null, 'filed'],
			['filed', 'in_review'],
			['in_review', 'awaiting_evidence'],
			['awaiting_evidence', 'in_review'],
			['in_review', 'in_review']
		]);
		expect(events[2]).toMatchObject({
			actorLabel: 'warranty@tidewater.example',
			comment: 'Send a capacity test report, please.'
		});
		expect((await mailsAbout(reference)).map((m) => m.subject)).toEqual([
			`Claim ${reference} received`,
			`Claim ${reference}: Under review`,
			`Claim ${reference}: Waiting for evidence`,
			`Claim ${reference}: Under review`
		]);
		expect(
			(await db.select().from(auditLog).where(eq(auditLog.entityId, reference))).map(
				(a) => a.action
			)
		).toEqual(['claim.file', 'claim.move', 'claim.move', 'claim.evidence', 'claim.comment']);
	});

	it('needs a written reason to decide against the recommendation, and stores the assessment with the decision', async () => {
		const sys = await commissionedSystem();
		const { id, reference } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0], sys.serials[1]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		await moveClaim(db, warranty, id, { to: 'in_review' }, NOW);
		const before = await counts();
		await expect(decideClaim(db, warranty, id, { decision: 'not_covered' }, NOW)).rejects.toThrow(
			'The assessment recommends cover; say why you decide otherwise'
		);
		await expect(
			decideClaim(db, warranty, id, { decision: 'not_covered', reason: 'Looks odd.' }, NOW)
		).rejects.toMatchObject({ status: 400, issues: [{ path: 'reason' }] });
		expect(await counts()).toEqual(before);
		const reason = 'The photos show the case crushed by a forklift: mechanical damage is excluded.';
		await decideClaim(db, warranty, id, { decision: 'not_covered', reason }, NOW);
		const claim = await loadClaim(db, saltmarsh, id);
		expect(claim).toMatchObject({
			state: 'not_covered',
			decision: 'not_covered',
			decisionReason: reason,
			decidedBy: warranty.userId
		});
		expect(JSON.parse(claim.assessment!)).toMatchObject({
			recommendation: 'cover',
			equivalentFullCycles: 3000
		});
		// Not covered: the modules are back in service.
		expect((await stateOf(sys.serials[0])).state).toBe('commissioned');
		const mails = await db
			.select()
			.from(mailOutbox)
			.where(eq(mailOutbox.subject, `Claim ${reference}: Not covered`));
		expect(mails[0].text).toContain(reason);
		await moveClaim(db, warranty, id, { to: 'closed' }, NOW);
		await expect(moveClaim(db, warranty, id, { to: 'in_review' }, NOW)).rejects.toThrow(
			/It is closed/
		);
	});

	it('needs a reason to decide without the evidence the assessment asks for', async () => {
		const sys = await commissionedSystem();
		const { measuredCapacityAh: _, ...noCapacity } = coverEvidence;
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0]], fault: 'Fade', evidence: noCapacity },
			NOW
		);
		await moveClaim(db, warranty, id, { to: 'in_review' }, NOW);
		await expect(decideClaim(db, warranty, id, { decision: 'covered' }, NOW)).rejects.toThrow(
			'The assessment asks for more evidence; say why you decide without it'
		);
		await expect(decideClaim(db, warranty, id, { decision: 'not_covered' }, NOW)).rejects.toThrow(
			/asks for more evidence/
		);
		await decideClaim(
			db,
			warranty,
			id,
			{ decision: 'covered', reason: 'Owner is a long-standing customer; goodwill cover agreed.' },
			NOW
		);
		expect((await loadClaim(db, warranty, id)).state).toBe('covered');
	});

	it('decides along the recommendation without a reason', async () => {
		const sys = await commissionedSystem();
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		await moveClaim(db, admin, id, { to: 'in_review' }, NOW);
		expect(await decideClaim(db, admin, id, { decision: 'covered' }, NOW)).toEqual({
			state: 'covered',
			recommendation: 'cover'
		});
	});
});

describe('replacement', () => {
	it('puts a same-model replacement in the failed slot with the rest of the original warranty; the failed module is returned', async () => {
		const sys = await commissionedSystem({ startsOn: '2021-09-01' });
		const failed = sys.serials[2];
		const { id, reference } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [failed], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		await moveClaim(db, warranty, id, { to: 'in_review' }, NOW);
		const [wrongModel] = await spares('TC-HC-24');
		const [otherDealers] = await spares('TC-HC-48', 1, 'Ridgeline Off-Grid Supply');
		const [good] = await spares('TC-HC-48');
		await expect(replaceModule(db, warranty, id, failed, good, undefined, NOW)).rejects.toThrow(
			/covered claim/
		);
		await decideClaim(db, warranty, id, { decision: 'covered' }, NOW);
		await expect(
			replaceModule(db, warranty, id, failed, wrongModel, undefined, NOW)
		).rejects.toThrow(/same model/);
		await expect(
			replaceModule(db, warranty, id, failed, otherDealers, undefined, NOW)
		).rejects.toThrow(/in stock, or shipped to this claim's dealer/);

		const original = await stateOf(failed);
		const result = await replaceModule(db, warranty, id, failed, good, undefined, NOW);
		expect(result).toEqual({
			replacement: good,
			raNumber: expect.stringMatching(/^RA-2026-\d{4}$/),
			state: 'replacement_sent'
		});
		const repl = await stateOf(good);
		expect(repl).toMatchObject({
			state: 'commissioned',
			systemId: sys.systemId,
			dealerOrgId: sys.dealerOrgId,
			warrantyStartsOn: '2021-09-01',
			warrantyEndsOn: original.warrantyEndsOn,
			warrantyTerms: original.warrantyTerms
		});
		expect(repl.warrantyEndsOn).toBe('2036-09-01');
		const [slot] = await db.select().from(systemSlots).where(eq(systemSlots.moduleId, repl.id));
		expect(slot).toMatchObject({ systemId: sys.systemId, stringNo: 1, position: 3 });
		expect(
			await db.select().from(systemSlots).where(eq(systemSlots.moduleId, original.id))
		).toHaveLength(0);
		expect(await stateOf(failed)).toMatchObject({ state: 'returned', systemId: null });
		const kinds = async (moduleId: number) =>
			(await db.select().from(moduleEvents).where(eq(moduleEvents.moduleId, moduleId))).map(
				(e) => e.kind
			);
		expect(await kinds(original.id)).toEqual(expect.arrayContaining(['replaced', 'returned']));
		expect(await kinds(repl.id)).toContain('replaced');
		expect((await loadClaim(db, warranty, id)).state).toBe('replacement_sent');
		expect((await mailsAbout(reference)).map((m) => m.subject)).toEqual([
			`Claim ${reference} received`,
			`Claim ${reference}: Under review`,
			`Claim ${reference}: Covered`,
			`Claim ${reference}: Replacement sent`
		]);

		// Inspected once it is back at the workshop (issue 13, item 3).
		await expect(
			recordReturnInspection(
				db,
				warranty,
				id,
				failed,
				{ cause: 'no_fault_found', findings: 'Inspected before it arrived.' },
				NOW
			)
		).rejects.toThrow(/scan it in first/);
		await actOnReturn(
			db,
			workshop,
			failed,
			{ action: 'receive', condition: 'intact' },
			undefined,
			NOW
		);
		await recordReturnInspection(
			db,
			warranty,
			id,
			failed,
			{
				cause: 'cell_fade_premature',
				findings: 'Two cells at 78 % of rated capacity; others normal.'
			},
			NOW
		);
		const detail = await getClaim(db, warranty, id, NOW);
		expect(detail.modules[0]).toMatchObject({
			serial: failed,
			replacementSerial: good,
			returnCause: 'cell_fade_premature'
		});
		await moveClaim(db, warranty, id, { to: 'closed' }, NOW);
		expect((await loadClaim(db, warranty, id)).state).toBe('closed');
	});

	it('waits for every claimed module before replacement sent, and accepts a module already at the same dealer', async () => {
		const sys = await commissionedSystem();
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0], sys.serials[1]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		await moveClaim(db, warranty, id, { to: 'in_review' }, NOW);
		await decideClaim(db, warranty, id, { decision: 'covered' }, NOW);
		await expect(moveClaim(db, warranty, id, { to: 'replacement_sent' }, NOW)).rejects.toThrow(
			/Scan a replacement for/
		);
		const [atDealer] = await spares('TC-HC-48', 1, 'Saltmarsh Solar');
		const [inStock] = await spares('TC-HC-48');
		expect(
			(await replaceModule(db, warranty, id, sys.serials[0], atDealer, undefined, NOW)).state
		).toBe('covered');
		expect(
			(await replaceModule(db, warranty, id, sys.serials[1], inStock, undefined, NOW)).state
		).toBe('replacement_sent');
	});
});

describe('queue', () => {
	it('shows a dealer only its own claims and flags claims past the response target', async () => {
		const salt = await commissionedSystem({ dealer: 'Saltmarsh Solar' });
		const ridge = await commissionedSystem({ dealer: 'Ridgeline Off-Grid Supply' });
		const a = await fileClaim(
			db,
			saltmarsh,
			{ serials: [salt.serials[0]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		const b = await fileClaim(
			db,
			ridgeline,
			{ serials: [ridge.serials[0], ridge.serials[1]], fault: 'Fade', evidence: coverEvidence },
			NOW
		);
		const [ridgelineOrg] = await db
			.select()
			.from(organisations)
			.where(eq(organisations.name, 'Ridgeline Off-Grid Supply'));

		const mine = await listClaims(db, ridgeline, { pageSize: 100 }, NOW);
		expect(mine.items.map((i) => i.reference)).toEqual([b.reference]);
		expect(mine.total).toBe(1);
		// A dealer filter from a dealer does not widen the scope.
		const [saltOrg] = await db
			.select()
			.from(organisations)
			.where(eq(organisations.name, 'Saltmarsh Solar'));
		expect(
			(await listClaims(db, ridgeline, { dealer: saltOrg.id }, NOW)).items.map((i) => i.reference)
		).toEqual([b.reference]);
		await expect(getClaim(db, saltmarsh, b.id, NOW)).rejects.toMatchObject({ status: 404 });

		const staff = await listClaims(db, warranty, { dealer: ridgelineOrg.id, pageSize: 100 }, NOW);
		expect(staff.items).toHaveLength(1);
		expect(staff.items[0]).toMatchObject({
			reference: b.reference,
			dealer: 'Ridgeline Off-Grid Supply',
			models: ['TC-HC-48'],
			serialCount: 2,
			ageDays: 0,
			overdue: false,
			state: 'filed'
		});
		const later = new Date(NOW.getTime() + 11 * DAY);
		const old = await listClaims(db, warranty, { minAgeDays: 11, pageSize: 100 }, later);
		expect(old.items.map((i) => i.reference)).toEqual(
			expect.arrayContaining([a.reference, b.reference])
		);
		expect(old.items.find((i) => i.reference === a.reference)).toMatchObject({
			ageDays: 11,
			overdue: true
		});
		expect((await listClaims(db, warranty, { minAgeDays: 12 }, later)).total).toBe(0);
		const page1 = await listClaims(
			db,
			warranty,
			{ page: 1, pageSize: 2, sort: 'reference', dir: 'desc' },
			NOW
		);
		expect(page1.items).toHaveLength(2);
		expect(page1.items[0].reference > page1.items[1].reference).toBe(true);
		expect(page1.total).toBeGreaterThan(2);
	});
});

describe('inverter log', () => {
	const csv =
		'Timestamp,E_Discharge_Total(kWh),Battery Temp(°C)\n2025-01-01 00:00,100.0,22\n2025-06-01 00:00,4100.0,28\n2026-01-01 00:00,9000.5,24\n';
	it('suggests a mapping, sums the throughput with the confirmed one and remembers it for the dealer', async () => {
		const first = await readInverterLog(db, saltmarsh, null, csv, undefined, NOW);
		expect(first.summary).toBeNull();
		expect(first.suggested).toMatchObject({
			timestampColumn: 'Timestamp',
			energyColumn: 'E_Discharge_Total(kWh)',
			energyUnit: 'kWh',
			energyKind: 'cumulative'
		});
		const mapping = {
			timestampColumn: 'Timestamp',
			energyColumn: 'E_Discharge_Total(kWh)',
			energyUnit: 'kWh' as const,
			energyKind: 'cumulative' as const,
			tempColumn: 'Battery Temp(°C)'
		};
		const read = await readInverterLog(db, saltmarsh, null, csv, mapping, NOW);
		expect(read.evidence).toEqual({ throughputWh: 8900500, avgCellTempC: 24.67, maxCellTempC: 28 });
		const [saved] = await db
			.select()
			.from(logMappings)
			.where(eq(logMappings.dealerOrgId, saltmarsh.organisationId!));
		expect(JSON.parse(saved.mapping)).toEqual(mapping);
		// Next time, the same dealer's file is read with the remembered mapping; another dealer's is not.
		expect((await readInverterLog(db, saltmarsh, null, csv, undefined, NOW)).usedRemembered).toBe(
			true
		);
		expect(
			(await readInverterLog(db, ridgeline, saltmarsh.organisationId, csv, undefined, NOW)).summary
		).toBeNull();
	});
});

describe('POST /api/warranty/assess', () => {
	const event = (user: Actor | null, body: unknown) => {
		const url = new URL('http://localhost/api/warranty/assess');
		return {
			url,
			locals: { user, token: null },
			request: new Request(url, {
				method: 'POST',
				headers: { 'content-type': 'application/json' },
				body: JSON.stringify(body)
			})
		} as unknown as Parameters<typeof assessPost>[0];
	};
	const input = {
		terms: TERMS,
		commissionedOn: '2022-03-01',
		claimedOn: '2026-03-15',
		ratedCapacityAh: 46.5,
		usableWh: 2300,
		measuredCapacityAh: 40,
		throughputWh: 6900000,
		avgCellTempC: 24,
		stopChargeProven: true
	};

	it('answers assessClaim exactly', async () => {
		const res = await assessPost(event(saltmarsh, input));
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body).toEqual(JSON.parse(JSON.stringify(assessClaim(input))));
		expect(Object.keys(body)).toEqual(
			expect.arrayContaining([
				'recommendation',
				'withinTerm',
				'yearsElapsed',
				'equivalentFullCycles',
				'deratedRatedCycles',
				'retentionPct',
				'promisedRetentionPct',
				'reasons'
			])
		);
	});

	it('answers 400 with a message and the issues for bad input, and refuses the wrong roles', async () => {
		const res = await assessPost(
			event(warranty, { ...input, measuredCapacityAh: -1, avgCellTempC: 400 })
		);
		expect(res.status).toBe(400);
		const body = await res.json();
		expect(body.message).toMatch(/Check the figures/);
		expect(body.issues.map((i: { path: string }) => i.path)).toEqual(
			expect.arrayContaining(['measuredCapacityAh', 'avgCellTempC'])
		);
		await expect(assessPost(event(workshop, input))).rejects.toMatchObject({ status: 403 });
		await expect(assessPost(event(null, input))).rejects.toMatchObject({ status: 401 });
	});
});

describe('claims on the dashboard', () => {
	it('counts a claim filed 12 days ago as past the 10-day target, and its e-mail links to it', async () => {
		const before = await claimFigures(db, NOW, 'Etc/GMT-10');
		const sys = await commissionedSystem();
		const { id } = await fileClaim(
			db,
			saltmarsh,
			{ serials: [sys.serials[0]], fault: 'Capacity fade', evidence: coverEvidence },
			new Date(NOW.getTime() - 12 * DAY)
		);
		const after = await claimFigures(db, NOW, 'Etc/GMT-10');
		expect(after.open).toBe(before.open + 1);
		const band = (f: typeof after) => f.ages.find((b) => b.label === '11–30 days')!;
		expect(band(after).n).toBe(band(before).n + 1);
		expect(band(after).late).toBe(true);
		const [mail] = await db
			.select()
			.from(mailOutbox)
			.where(like(mailOutbox.text, `%/claims/${id}\n%`));
		expect(mail?.toAddr).toBe('dealer@saltmarsh.example');
	});
});
