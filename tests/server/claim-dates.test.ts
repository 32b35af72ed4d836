/**
 * A claim's business dates on the assembler's calendar. The demo assembler keeps Etc/GMT-10:
 * ten hours ahead of UTC all year (IANA tz database, file "etcetera": the Etc/GMT sign is
 * inverted, so GMT-10 is UTC+10), so local midnight is 14:00:00 UTC the day before. Every
 * expected day below is worked out by hand from that offset.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Db } from '$lib/server/db';
import type { Actor } from '$lib/server/actor';
import { closeMailer } from '$lib/server/mail';
import { loadClaim } from '$lib/server/services/claims';
import { fileClaim } from '$lib/server/services/claim-filing';
import { assessmentFor } from '$lib/server/services/claim-assessment';
import { claimEvidenceSchema } from '$lib/schemas/warranty-assess';
import { actorFor, createSeededDb } from '../factories/db';
import { commissionedSystem } from '../factories/claims';

let db: Db;
let by: { workshop: Actor; admin: Actor; tech: Actor };
let saltmarsh: Actor;
let warranty: Actor;

beforeAll(async () => {
	db = await createSeededDb();
	const [workshop, admin, tech] = await Promise.all(
		['workshop@tidewater.example', 'admin@tidewater.example', 'tech@tidewater.example'].map((e) =>
			actorFor(db, e)
		)
	);
	by = { workshop, admin, tech };
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	warranty = await actorFor(db, 'warranty@tidewater.example');
});
afterAll(async () => closeMailer(db));

const evidence = claimEvidenceSchema.parse({
	measuredCapacityAh: '40',
	measuredAtC: '25',
	cycleCount: '900',
	description: 'Capacity dropped over the winter.'
});

/** Files a claim for a fresh one-module system commissioned on `startsOn`, at the instant `at`. */
async function fileAt(at: string, startsOn = '2022-03-01') {
	const sys = await commissionedSystem(db, by, { count: 1, startsOn });
	const { id, reference } = await fileClaim(
		db,
		saltmarsh,
		{ serials: sys.serials, fault: 'Capacity fade', evidence },
		new Date(at)
	);
	const assessment = await assessmentFor(db, await loadClaim(db, warranty, id));
	return { reference, assessment };
}

describe('a claim’s filing date, either side of midnight in Etc/GMT-10', () => {
	it('numbers a claim filed in the last local second of 2026 with 2026, one a second later with 2027', async () => {
		expect((await fileAt('2026-12-31T13:59:59Z')).reference).toMatch(/^CL-2026-\d{4}$/);
		expect((await fileAt('2026-12-31T14:00:00Z')).reference).toMatch(/^CL-2027-\d{4}$/);
	});

	it('dates the claim by the local day: 13:59:59Z is still that day, 14:00:00Z the next', async () => {
		expect((await fileAt('2026-11-30T13:59:59Z')).assessment.claimedOn).toBe('2026-11-30');
		expect((await fileAt('2026-11-30T14:00:00Z')).assessment.claimedOn).toBe('2026-12-01');
	});

	it('knows the leap day: 14:00:00Z on 28 February 2028 is 29 February there, and 14:00:00Z on the 29th is 1 March', async () => {
		const leap = await fileAt('2028-02-28T14:00:00Z');
		expect(leap.assessment.claimedOn).toBe('2028-02-29');
		expect(leap.reference).toMatch(/^CL-2028-\d{4}$/);
		expect((await fileAt('2028-02-29T13:59:59Z')).assessment.claimedOn).toBe('2028-02-29');
		expect((await fileAt('2028-02-29T14:00:00Z')).assessment.claimedOn).toBe('2028-03-01');
	});

	it('judges the warranty term by the local day: filed on its last day it is within, a second later not', async () => {
		// Commissioned 2022-03-01 with 15-year terms: the term runs to 2037-03-01 (15 calendar
		// years later, the day the factory records as the warranty end).
		const last = await fileAt('2037-03-01T13:59:59Z');
		expect(last.assessment.claimedOn).toBe('2037-03-01');
		expect(last.assessment.termEndsOn).toBe('2037-03-01');
		expect(last.assessment.withinTerm).toBe(true);
		const after = await fileAt('2037-03-01T14:00:00Z');
		expect(after.assessment.claimedOn).toBe('2037-03-02');
		expect(after.assessment.withinTerm).toBe(false);
	});
});
