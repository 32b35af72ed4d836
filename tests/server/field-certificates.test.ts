import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { eq, inArray, sql } from 'drizzle-orm';
import canonicalize from 'canonicalize';
import type { Db } from '$lib/server/db';
import {
	commissionings,
	commissioningRuleSets,
	modules,
	organisations,
	sites,
	systems,
	systemSlots,
	users
} from '$lib/server/db/schema';
import { submitCommissioning } from '$lib/server/services/commissioning-submit';
import { canonicalContent, verifyCertificate } from '$lib/server/services/certificate-verification';
import { certificateData } from '$lib/server/services/certificates';
import {
	addRuleSetVersion,
	listRuleSets,
	ruleSetInForce,
	setDealerMarket
} from '$lib/server/services/rule-sets';
import { closeMailer } from '$lib/server/mail';
import { commissioningSchema } from '$lib/schemas/commissioning';
import { ruleSetFormSchema } from '$lib/schemas/rule-set';
import { DEFAULT_RULE_SET } from '$lib/domain/commissioning';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';
import { SIGNATURE } from '../factories/signatures';

let db: Db;
let workshop: Actor;
let tech: Actor;
let admin: Actor;

beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	tech = await actorFor(db, 'tech@tidewater.example');
	admin = await actorFor(db, 'admin@tidewater.example');
});
afterAll(async () => closeMailer(db));

/** One TC-HC-48 module per string, `parallel` strings, on a Ridgeline Off-Grid Supply site. */
async function twoStringSystem(parallel = 2) {
	const serials = await makeModules(db, workshop, { code: 'TC-HC-48', count: parallel });
	const [dealer] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.name, 'Ridgeline Off-Grid Supply'));
	const [me] = await db.select().from(users).where(eq(users.email, 'tech@tidewater.example'));
	const [site] = await db
		.insert(sites)
		.values({
			dealerOrgId: dealer.id,
			name: 'Fernbrake hut',
			ownerName: 'Odile Prewitt',
			ownerContact: '+00 555 0100',
			address: '9 Fernbrake Track',
			application: 'telecom',
			createdBy: me.id
		})
		.returning();
	const rows = await db.select().from(modules).where(inArray(modules.serial, serials));
	const [system] = await db
		.insert(systems)
		.values({
			siteId: site.id,
			name: 'Hut bank',
			modelId: rows[0].modelId,
			series: 1,
			parallel,
			inverterName: 'Invented 48 V charger',
			inverterMinV: 38,
			inverterMaxV: 64
		})
		.returning();
	for (const [i, m] of rows.entries()) {
		await db
			.insert(systemSlots)
			.values({ systemId: system.id, stringNo: i + 1, position: 1, moduleId: m.id });
		await db
			.update(modules)
			.set({ state: 'installed', systemId: system.id, dealerOrgId: dealer.id })
			.where(eq(modules.id, m.id));
	}
	return { system, serials, dealer };
}

const form = (over: Record<string, string> = {}) =>
	commissioningSchema.parse({
		'moduleOcvV.1.1': '51,65',
		'moduleOcvV.2.1': '51,66',
		'stringVoltageV.1': '51,65',
		'stringVoltageV.2': '51,66',
		insulationTestV: '500',
		insulationMohm: '80',
		polarityChecked: 'yes',
		torqueConfirmed: 'yes',
		deviceRatingA: '400',
		deviceDcRatingV: '80',
		deviceBreakingKA: '25',
		stringProtection: 'yes',
		ambientC: '21',
		stopChargeProven: 'yes',
		technicianName: 'Joss Carrow',
		licenceNumber: 'EL-55120',
		handoverName: 'Odile Prewitt',
		technicianSignature: SIGNATURE,
		ownerSignature: SIGNATURE,
		cautionsAcknowledged: 'yes',
		...over
	});
const DAY = new Date('2026-12-01T09:30:00Z');

describe('readings that catch typos', () => {
	it('refuses 5165 for 51.65 V as implausible and stores nothing', async () => {
		const { system } = await twoStringSystem();
		await expect(
			submitCommissioning(db, tech, system.id, form({ 'stringVoltageV.1': '5165' }), DAY)
		).rejects.toThrow(
			/5,165 V is about 100 times the 51\.65 V expected .* check the decimal point/
		);
		const rows = await db
			.select()
			.from(commissionings)
			.where(eq(commissionings.systemId, system.id));
		expect(rows).toHaveLength(0);
	});
});

describe('breaking capacity', () => {
	it('a 10 kA device fails against 2 × 60.5 V / 6.0 mΩ = 20 167 A; no certificate', async () => {
		const { system } = await twoStringSystem();
		const r = await submitCommissioning(db, tech, system.id, form({ deviceBreakingKA: '10' }), DAY);
		expect(r.overall).toBe('fail');
		expect(r.certificateNo).toBeNull();
		expect(r.items.find((i) => i.key === 'protective_device')!.reason).toContain(
			'breaking capacity 10 kA, below the 20.2 kA (20,167 A)'
		);
	});
});

describe('signatures', () => {
	it('a pass without the owner’s signature is refused with the reason', async () => {
		const { system } = await twoStringSystem();
		await expect(
			submitCommissioning(db, tech, system.id, form({ ownerSignature: '' }), DAY)
		).rejects.toThrow(/needs both signatures/);
	});

	it('a scribble of too few points, malformed JSON and a 200 KB string are refused in words', () => {
		const few = JSON.stringify({ w: 300, h: 120, strokes: [[[1, 1]]] });
		for (const bad of [few, '{"w":', 'x'.repeat(200_000)]) {
			const r = commissioningSchema.safeParse({ ...formRaw(), technicianSignature: bad });
			expect(r.success).toBe(false);
			expect(r.error!.issues[0].message).toMatch(/Technician’s signature: /);
		}
	});
});

function formRaw() {
	return {
		technicianName: 'Joss Carrow',
		licenceNumber: 'EL-55120',
		cautionsAcknowledged: 'yes'
	};
}

describe('certificate: rule set version, content hash, verification', () => {
	it('stores the rule set version and a SHA-256 of the RFC 8785 canonical content; the page verifies it', async () => {
		const { system, serials } = await twoStringSystem();
		const r = await submitCommissioning(db, tech, system.id, form(), DAY);
		expect(r.overall).toBe('pass');
		const [row] = await db.select().from(commissionings).where(eq(commissionings.id, r.id));
		expect(row.ruleSetVersion).toBe(1);
		// Recomputed here with node:crypto over canonicalize's output (RFC 8785, an independent library).
		const expected = createHash('sha256').update(canonicalContent(row), 'utf8').digest('hex');
		expect(row.contentHash).toBe(expected);
		expect(row.contentHash).toMatch(/^[0-9a-f]{64}$/);
		// Key order does not matter to the canonical form.
		expect(canonicalize({ b: 1, a: [2, { d: 3, c: 4 }] })).toBe('{"a":[2,{"c":4,"d":3}],"b":1}');

		const data = await certificateData(db, tech, r.id);
		expect(data.installerName).toBe('Ridgeline Off-Grid Supply');
		expect(data.assemblerName).toBe('Tidewater Cellworks');
		expect(data.ruleSet).toMatchObject({ name: DEFAULT_RULE_SET.name, version: 1 });
		// The fixture signs with two strokes: a zig-zag and an underline.
		expect(data.signatures.owner?.strokes.length).toBe(2);
		expect(data.readings.find((x) => x.what === 'Breaking capacity')?.value).toBe('25.0 kA');

		const ok = await verifyCertificate(db, r.certificateNo!, row.contentHash);
		expect(ok.state).toBe('genuine');
		if (ok.state !== 'unknown') expect(ok.serials).toEqual(serials);
		expect((await verifyCertificate(db, r.certificateNo!, 'f'.repeat(64))).state).toBe('different');
		expect((await verifyCertificate(db, 'PLC-1999-00001', null)).state).toBe('unknown');

		// The table refuses edits (append-only trigger); someone with raw access to the file drops
		// the trigger and edits a reading: the certificate no longer verifies.
		const m = JSON.parse(row.measurements);
		m.insulation.measuredMohm = 0.2;
		await expect(
			db
				.update(commissionings)
				.set({ measurements: JSON.stringify(m) })
				.where(eq(commissionings.id, r.id))
		).rejects.toThrow();
		await db.run(sql`DROP TRIGGER commissionings_no_update`);
		await db
			.update(commissionings)
			.set({ measurements: JSON.stringify(m) })
			.where(eq(commissionings.id, r.id));
		expect((await verifyCertificate(db, r.certificateNo!, row.contentHash)).state).toBe('altered');
	});
});

describe('rule sets', () => {
	const input = (over: Record<string, string> = {}) =>
		ruleSetFormSchema.parse({
			market: 'coast-region',
			name: 'Coast region wiring rules',
			effectiveFrom: '2026-11-01',
			'limits.moduleOcvToleranceV': '0,04',
			'limits.stringSumTolerancePct': '1',
			'limits.stringSumToleranceV': '0.5',
			'limits.overcurrentFactor': '1.5',
			'limits.implausibleAboveFactor': '1.2',
			'limits.implausibleBelowFactor': '0.5',
			'citations.moduleVoltages': 'common practice',
			'citations.stringSum': 'common practice',
			'citations.insulation': 'IEC 60364-6:2016 Table 6.1',
			'citations.overcurrent': 'Coast wiring rules cl. 7.2',
			'citations.voltageRating': 'Coast wiring rules cl. 7.3',
			'citations.breakingCapacity': 'Coast wiring rules cl. 7.4',
			'citations.stringProtection': 'Coast wiring rules cl. 7.5',
			'citations.plausibility': 'common practice',
			...over
		});

	it('only an admin adds versions; versions count up; a dealer in the market is judged by it from its effective date', async () => {
		await expect(addRuleSetVersion(db, tech, input())).rejects.toThrow(/Only an administrator/);
		const v1 = await addRuleSetVersion(db, admin, input());
		const v2 = await addRuleSetVersion(
			db,
			admin,
			input({ effectiveFrom: '2027-01-01', name: 'Coast rules 2027' })
		);
		expect([v1.version, v2.version]).toEqual([1, 2]);
		const { system, dealer } = await twoStringSystem();
		await setDealerMarket(db, admin, dealer.id, 'coast-region');
		// The day before v1 applies: the default set; from 2026-11-01: v1; from 2027-01-01: v2.
		expect((await ruleSetInForce(db, dealer.id, '2026-10-31')).market).toBe('default');
		expect((await ruleSetInForce(db, dealer.id, '2026-11-01')).version).toBe(1);
		expect((await ruleSetInForce(db, dealer.id, '2026-12-31')).version).toBe(1);
		expect((await ruleSetInForce(db, dealer.id, '2027-01-01')).version).toBe(2);

		// 150 % of 2 × 3C × 46.5 Ah = 418.5 A: the 400 A device now fails, citing the market's clause.
		const r = await submitCommissioning(db, tech, system.id, form(), DAY);
		const dev = r.items.find((i) => i.key === 'protective_device')!;
		expect(dev.status).toBe('fail');
		expect(dev.reason).toContain('Coast wiring rules cl. 7.2');
		const [row] = await db.select().from(commissionings).where(eq(commissionings.id, r.id));
		expect(row.ruleSetId).toBe(v1.id);
		expect(row.ruleSetVersion).toBe(1);
		await setDealerMarket(db, admin, dealer.id, null);
		const listed = await listRuleSets(db, admin);
		expect(listed.markets.map((m) => m.market)).toEqual(['coast-region', 'default']);
	});

	it('a stored version can be neither changed nor deleted (append-only triggers)', async () => {
		await expect(
			db
				.update(commissioningRuleSets)
				.set({ name: 'x' })
				.where(eq(commissioningRuleSets.market, 'default'))
		).rejects.toThrow();
		await expect(
			db.delete(commissioningRuleSets).where(eq(commissioningRuleSets.market, 'default'))
		).rejects.toThrow();
	});

	it('refuses a bad market code and a limit out of range, in words', () => {
		const r = ruleSetFormSchema.safeParse({ ...Object.fromEntries([]), market: 'Coast Region!' });
		expect(r.success).toBe(false);
		const bad = (() => {
			try {
				input({ 'limits.overcurrentFactor': '7' });
				return null;
			} catch (e) {
				return String(e);
			}
		})();
		expect(bad).toContain('Device current factor must be between 1 and 3');
	});
});
