/**
 * Passports through the services, on the demo fleet: the tier each viewer gets, access
 * links (issue, use, expiry, revocation, scope, audit), the admin's passport items, and the
 * export of a lot. Every passport is validated against our Battery Pass v1.2.0 schemas
 * with ajv-draft-04, an independent validator.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { eq, like } from 'drizzle-orm';
import Ajv from 'ajv-draft-04';
import JSZip from 'jszip';
import type { Db } from '$lib/server/db';
import {
	auditLog,
	claimModules,
	claims,
	modelPassportItems,
	modules,
	shipments
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { getPassport } from '$lib/server/services/passports';
import { issueGrant, revokeGrant } from '$lib/server/services/passport-grants';
import { getModelPassportItems, saveModelPassportItems } from '$lib/server/services/passport-items';
import { exportPassports } from '$lib/server/services/passport-export';
import { moduleForDigitalLink } from '$lib/server/services/resolver';
import { passportSchema } from '$lib/domain/passport-schema';
import { ForbiddenError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { actorFor, createSeededDb } from '../factories/db';
import { modelId } from '../factories/modules';

const BASE = 'https://reg.example';
const NOW = new Date('2026-12-02T05:00:00Z');
const ajv = new Ajv({ allErrors: true });
const valid = (p: Awaited<ReturnType<typeof getPassport>>) => {
	const v = ajv.compile(
		passportSchema(
			p.tier,
			p.itemStatus.map((s) => s.path)
		)
	);
	return v(p) ? [] : v.errors;
};

let db: Db;
let admin: Actor;
let saltmarsh: Actor;
let ridgeline: Actor;
let warranty: Actor;
let warm: string; // the 2023 cabin module with an open claim (Saltmarsh Solar)

beforeAll(async () => {
	db = await createSeededDb();
	await seedDemoFleet(db);
	admin = await actorFor(db, 'admin@tidewater.example');
	saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
	ridgeline = await actorFor(db, 'dealer@ridgeline.example');
	warranty = await actorFor(db, 'warranty@tidewater.example');
	const [row] = await db
		.select({ serial: modules.serial })
		.from(claims)
		.innerJoin(claimModules, eq(claimModules.claimId, claims.id))
		.innerJoin(modules, eq(claimModules.moduleId, modules.id))
		.where(like(claims.fault, 'One module warmer%'));
	warm = row.serial;
}, 120_000);

describe('tiers are decided on the server', () => {
	it('anyone gets the public tier: no condition, no owner, no site', async () => {
		const p = await getPassport(db, { actor: null }, warm, BASE, NOW);
		expect(p.tier).toBe('public');
		expect(p.performance).not.toHaveProperty('batteryCondition');
		const text = JSON.stringify(p);
		for (const personal of ['Marra Quill', 'Heron Point', 'Saltmarsh', 'homes.example'])
			expect(text).not.toContain(personal);
		expect(valid(p)).toEqual([]);
	});

	it('the module’s dealer gets the condition and the history', async () => {
		const p = await getPassport(db, { actor: saltmarsh }, warm, BASE, NOW);
		expect(p.tier).toBe('full');
		const cond = p.performance.batteryCondition as Record<string, { [k: string]: unknown }>;
		// Claim evidence: 44.0 Ah measured of 46.5 Ah rated → 94.62 % state of health (REFERENCES §2)
		const soh = (44.0 / 46.5) * 100;
		expect(cond.capacityFade.capacityFadeValue).toBeCloseTo(100 - soh, 2);
		expect(
			(p.supplementary.condition as { stateOfHealth: { valuePct: number } }).stateOfHealth.valuePct
		).toBeCloseTo(soh, 2);
		// The inverter log's 2 900 EFC × 2 300 Wh × 4 modules, shared over the bank's 4 modules,
		// is 6 670 000 Wh per module → 2 900 equivalent full cycles on the energy basis
		expect(cond.numberOfFullCycles.numberOfFullCyclesValue).toBe(2900);
		expect(cond.energyThroughput).toBeCloseTo(6670, 6);
		expect(
			(cond.negativeEvents as unknown as { negativeEvent: string }[]).some((e) =>
				e.negativeEvent.includes('One module warmer')
			)
		).toBe(true);
		expect(Array.isArray(p.supplementary.history)).toBe(true);
		expect(valid(p)).toEqual([]);
	});

	it('assembler staff get the full tier', async () => {
		const p = await getPassport(db, { actor: warranty }, warm, BASE, NOW);
		expect(p.tier).toBe('full');
		expect(valid(p)).toEqual([]);
	});

	it('another dealer gets exactly what anyone gets', async () => {
		const anon = await getPassport(db, { actor: null }, warm, BASE, NOW);
		const other = await getPassport(db, { actor: ridgeline }, warm, BASE, NOW);
		expect(other).toEqual(anon);
	});

	it('an unknown serial is a NotFoundError', async () => {
		await expect(getPassport(db, { actor: null }, 'PL48-26-999999X', BASE, NOW)).rejects.toThrow(
			NotFoundError
		);
	});
});

describe('access links for recyclers, repairers and authorities', () => {
	it('a module link gives the restricted tier, is audited on issue and on each use', async () => {
		const g = await issueGrant(
			db,
			admin,
			{
				partyKind: 'recycler',
				partyName: 'Harbourside Recovery (invented)',
				scopeKind: 'module',
				scopeValue: warm,
				days: 14
			},
			NOW
		);
		const p = await getPassport(
			db,
			{ actor: null, access: g.secret },
			warm,
			BASE,
			new Date(NOW.getTime() + 3_600_000)
		);
		expect(p.tier).toBe('restricted');
		expect(p.performance).toHaveProperty('batteryCondition');
		expect(p.supplementary).not.toHaveProperty('history');
		expect(valid(p)).toEqual([]);
		const audit = (
			await db
				.select()
				.from(auditLog)
				.where(eq(auditLog.entityId, String(g.id)))
		).filter((a) => a.entity === 'passport_grant');
		expect(audit.map((a) => a.action)).toEqual(['passport_grant.issue', 'passport_grant.use']);
	});

	it('refuses an expired link the moment it expires, and a revoked one, saying why', async () => {
		const g = await issueGrant(
			db,
			admin,
			{
				partyKind: 'authority',
				partyName: 'Market surveillance office (invented)',
				scopeKind: 'module',
				scopeValue: warm,
				days: 1
			},
			NOW
		);
		const justBefore = new Date(NOW.getTime() + 86_400_000 - 1);
		await expect(
			getPassport(db, { actor: null, access: g.secret }, warm, BASE, justBefore)
		).resolves.toMatchObject({ tier: 'restricted' });
		await expect(
			getPassport(
				db,
				{ actor: null, access: g.secret },
				warm,
				BASE,
				new Date(NOW.getTime() + 86_400_000)
			)
		).rejects.toThrow(/expired on 2026-12-03/);
		await revokeGrant(db, admin, g.id, NOW);
		await expect(
			getPassport(db, { actor: null, access: g.secret }, warm, BASE, NOW)
		).rejects.toThrow(/revoked on 2026-12-02/);
		await expect(revokeGrant(db, admin, g.id, NOW)).rejects.toThrow(/already revoked/);
	});

	it('a module link does not open another module; an unknown secret is refused', async () => {
		const g = await issueGrant(
			db,
			admin,
			{
				partyKind: 'repairer',
				partyName: 'Quayside Repairs (invented)',
				scopeKind: 'module',
				scopeValue: warm,
				days: 7
			},
			NOW
		);
		const [other] = await db.select().from(modules).where(like(modules.serial, 'PL24-%')).limit(1);
		await expect(
			getPassport(db, { actor: null, access: g.secret }, other.serial, BASE, NOW)
		).rejects.toThrow(ForbiddenError);
		await expect(
			getPassport(db, { actor: null, access: 'ppa_' + 'x'.repeat(32) }, warm, BASE, NOW)
		).rejects.toThrow(/not known/);
	});

	it('a lot link opens every module with cells from that lot, and no other', async () => {
		const g = await issueGrant(
			db,
			admin,
			{
				partyKind: 'recycler',
				partyName: 'Harbourside Recovery (invented)',
				scopeKind: 'lot',
				scopeValue: 'hcl-2313-b',
				days: 30
			},
			NOW
		);
		expect(g.scopeValue).toBe('HCL-2313-B');
		const rows = await db.select().from(modules).where(like(modules.cellLots, '%HCL-2313-B%'));
		expect(rows.length).toBeGreaterThan(0);
		for (const m of rows)
			expect(
				(await getPassport(db, { actor: null, access: g.secret }, m.serial, BASE, NOW)).tier
			).toBe('restricted');
		const [notInLot] = await db
			.select()
			.from(modules)
			.where(like(modules.cellLots, '%HCL-2642-C%'))
			.limit(1);
		await expect(
			getPassport(db, { actor: null, access: g.secret }, notInLot.serial, BASE, NOW)
		).rejects.toThrow(/cell lot HCL-2313-B/);
	});

	it('refuses a link for a lot no module carries', async () => {
		await expect(
			issueGrant(
				db,
				admin,
				{
					partyKind: 'recycler',
					partyName: 'X Recovery',
					scopeKind: 'lot',
					scopeValue: 'NO-SUCH-LOT',
					days: 3
				},
				NOW
			)
		).rejects.toThrow(NotFoundError);
	});
});

describe('the admin’s passport items of a model', () => {
	it('refuses the whole save when one item is wrong, and names it', async () => {
		const id = await modelId(db, 'TC-HC-12');
		const before = await getModelPassportItems(db, id);
		const err = await saveModelPassportItems(db, admin, id, {
			carbonFootprint: { value: 'about 60', unit: 'kg CO2e/kWh' },
			roundtripEfficiency: { value: '96', unit: '%' },
			hazardousSubstances: { value: 'LiPF6 | 21324403 | AcuteToxicity | 1 | Electrolyte | toxic' }
		}).catch((e) => e);
		expect(err).toBeInstanceOf(InvalidInputError);
		expect((err as InvalidInputError).issues!.map((i) => i.path).sort()).toEqual([
			'carbonFootprint',
			'hazardousSubstances'
		]);
		expect(await getModelPassportItems(db, id)).toEqual(before);
	});

	it('stores each value with its unit, converts on output, and empties back to “not yet provided”', async () => {
		const id = await modelId(db, 'TC-HC-12');
		const keep = { batteryCategory: { value: 'stationary' } };
		await saveModelPassportItems(
			db,
			admin,
			id,
			{ ...keep, initialInternalResistance: { value: '1300', unit: 'mΩ' } },
			NOW
		);
		const [row] = await db
			.select()
			.from(modelPassportItems)
			.where(eq(modelPassportItems.itemKey, 'initialInternalResistance'));
		expect(row.unit).toBe('mΩ');
		const [m12] = await db.select().from(modules).where(like(modules.serial, 'PL12-%')).limit(1);
		const p = await getPassport(db, { actor: null }, m12.serial, BASE, NOW);
		// 1300 mΩ is 1.3 Ω, the model's unit for ohmicResistance
		expect(
			(p.performance.batteryTechicalProperties as { initialInternalResistance: unknown })
				.initialInternalResistance
		).toEqual([{ ohmicResistance: 1.3, batteryComponent: 'module' }]);
		await saveModelPassportItems(db, admin, id, keep, NOW);
		const after = await getPassport(db, { actor: null }, m12.serial, BASE, NOW);
		expect(
			after.itemStatus.find((s) => s.path.endsWith('/initialInternalResistance'))?.status
		).toBe('not_yet_provided');
		const audits = await db
			.select()
			.from(auditLog)
			.where(eq(auditLog.action, 'model.passport_items'));
		expect(audits.length).toBeGreaterThanOrEqual(2);
	});
});

describe('export of a lot', () => {
	const readAll = async (s: ReadableStream<Uint8Array>) =>
		new Uint8Array(await new Response(s).arrayBuffer());

	it('JSON Lines: one valid restricted passport per module of the shipment', async () => {
		const [s] = await db.select().from(shipments).limit(1);
		const out = await exportPassports(db, warranty, { shipment: s.id, format: 'jsonl' }, BASE, NOW);
		const text = new TextDecoder().decode(await readAll(out.stream));
		const lines = text.trimEnd().split('\n');
		const n = await db.$client.execute({
			sql: 'select count(*) as n from shipment_items where shipment_id = ?',
			args: [s.id]
		});
		expect(lines).toHaveLength(Number(n.rows[0].n));
		for (const l of lines) {
			const p = JSON.parse(l);
			expect(p.tier).toBe('restricted');
			expect(valid(p)).toEqual([]);
		}
		expect(out.filename).toMatch(/^passports-shipment-.+\.jsonl$/);
	});

	it('ZIP: read back with an independent library (jszip), a file per module plus a manifest', async () => {
		const out = await exportPassports(
			db,
			warranty,
			{ model: 'TC-HC-24', format: 'zip' },
			BASE,
			NOW
		);
		const zip = await JSZip.loadAsync(await readAll(out.stream));
		const files = Object.keys(zip.files).filter((f) => f.startsWith('passports/'));
		const count = (
			await db
				.select()
				.from(modules)
				.where(eq(modules.modelId, await modelId(db, 'TC-HC-24')))
		).length;
		expect(files).toHaveLength(count);
		const manifest = JSON.parse(await zip.file('manifest.json')!.async('string'));
		expect(manifest).toMatchObject({ modules: count, tier: 'restricted' });
		const one = JSON.parse(await zip.file(files[0])!.async('string'));
		expect(valid(one)).toEqual([]);
	});

	it('an unknown lot or shipment is a NotFoundError before anything is streamed', async () => {
		await expect(
			exportPassports(db, warranty, { lot: 'NOPE-1', format: 'jsonl' }, BASE, NOW)
		).rejects.toThrow(NotFoundError);
		await expect(
			exportPassports(db, warranty, { shipment: 99999, format: 'zip' }, BASE, NOW)
		).rejects.toThrow(NotFoundError);
	});
});

describe('the resolver finds the module a Digital Link names', () => {
	it('needs the serial in the register and the GTIN of its model', async () => {
		const [m] = await db.select().from(modules).where(like(modules.serial, 'PL48-%')).limit(1);
		await expect(moduleForDigitalLink(db, '09521234600022', m.serial)).resolves.toEqual({
			serial: m.serial
		});
		await expect(moduleForDigitalLink(db, '09521234600015', m.serial)).rejects.toThrow(
			/does not carry GTIN/
		);
		await expect(moduleForDigitalLink(db, '09521234600022', 'PL48-26-999999X')).rejects.toThrow(
			/No module/
		);
		const [m12] = await db.select().from(modules).where(like(modules.serial, 'PL12-%')).limit(1);
		await expect(moduleForDigitalLink(db, '09521234600022', m12.serial)).rejects.toThrow(
			/has no GTIN/
		);
	});
});
