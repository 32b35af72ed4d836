import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inflateSync } from 'node:zlib';
import { eq, inArray } from 'drizzle-orm';
import { PDFDocument } from 'pdf-lib';
import type { Db } from '$lib/server/db';
import {
	auditLog,
	commissionings,
	moduleEvents,
	modules,
	organisations,
	sites,
	systems,
	systemSlots,
	users
} from '$lib/server/db/schema';
import { evaluateDraft, loadSystemForCommissioning } from '$lib/server/services/commissioning';
import { submitCommissioning } from '$lib/server/services/commissioning-submit';
import { certificateData } from '$lib/server/services/certificates';
import { certificatePdf } from '$lib/server/services/certificate-pdf';
import { closeMailer, listOutbox } from '$lib/server/mail';
import {
	commissioningSchema,
	draftMeasurements,
	draftMeasurementsSchema
} from '$lib/schemas/commissioning';
import { evaluateCommissioning } from '$lib/domain/commissioning';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';
import { SIGNATURE } from '../factories/signatures';

let db: Db;
let workshop: Actor;
let tech: Actor;
let saltmarshDealer: Actor;
let ridgelineTech: Actor;

beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	tech = await actorFor(db, 'tech@tidewater.example');
	saltmarshDealer = await actorFor(db, 'dealer@saltmarsh.example');
	ridgelineTech = await actorFor(db, 'tech@ridgeline.example');
});
afterAll(async () => closeMailer(db));

/** A Saltmarsh Solar site with a TC-HC-48 system of `series` × `parallel` installed modules, rows inserted directly. */
async function makeSystem(
	opts: { series?: number; parallel?: number; dealer?: string | null; leaveEmpty?: number } = {}
) {
	const series = opts.series ?? 2;
	const parallel = opts.parallel ?? 1;
	const serials = await makeModules(db, workshop, { code: 'TC-HC-48', count: series * parallel });
	const [dealer] =
		opts.dealer === null
			? []
			: await db
					.select()
					.from(organisations)
					.where(eq(organisations.name, opts.dealer ?? 'Saltmarsh Solar'));
	const [me] = await db.select().from(users).where(eq(users.email, 'tech@tidewater.example'));
	const [site] = await db
		.insert(sites)
		.values({
			dealerOrgId: dealer?.id ?? null,
			name: 'Heron Point cabin',
			ownerName: 'Wren Tamsin',
			ownerContact: 'wren@heron.example',
			address: '4 Heron Point Lane, Saltmarsh',
			application: 'off_grid_home',
			createdBy: me.id
		})
		.returning();
	const [modelRow] = await db
		.select({ id: modules.modelId })
		.from(modules)
		.where(eq(modules.serial, serials[0]));
	const [system] = await db
		.insert(systems)
		.values({
			siteId: site.id,
			name: 'Cabin bank',
			modelId: modelRow.id,
			series,
			parallel,
			inverterName: 'Invented 5 kW inverter',
			inverterMinV: 70,
			inverterMaxV: 130
		})
		.returning();
	const rows = await db.select().from(modules).where(inArray(modules.serial, serials));
	const placed = rows.slice(0, rows.length - (opts.leaveEmpty ?? 0));
	for (const [i, m] of placed.entries()) {
		await db.insert(systemSlots).values({
			systemId: system.id,
			stringNo: Math.floor(i / series) + 1,
			position: (i % series) + 1,
			moduleId: m.id
		});
		await db
			.update(modules)
			.set({ state: 'installed', systemId: system.id, dealerOrgId: dealer?.id ?? null })
			.where(eq(modules.id, m.id));
	}
	return { system, site, serials };
}

// TC-HC-48 (invented): 22 cells of 1.8 / 2.35 / 2.75 V, 46.5 Ah, 3C, 6.0 mΩ. Two in series: string 79.2
// to 121 V, nominal 103.4 V, so IEC 60364-6 Table 6.1 asks 500 V DC and 1.0 MΩ (by the 121 V maximum).
// Continuous 3 × 46.5 = 139.5 A, device ≥ 174.4 A (125 %, from memory); fault current per string
// 60.5 V / 6.0 mΩ = 10 083 A. Values typed as a phone sends them, decimal commas included.
const form = (over: Record<string, string> = {}) =>
	commissioningSchema.parse({
		'moduleOcvV.1.1': '50,60',
		'moduleOcvV.1.2': '50,62',
		'stringVoltageV.1': '101,2',
		interStringDiffV: '',
		insulationTestV: '500',
		insulationMohm: '50',
		polarityChecked: 'yes',
		torqueConfirmed: 'yes',
		deviceRatingA: '200',
		deviceDcRatingV: '150',
		deviceBreakingKA: '25',
		stringProtection: 'yes',
		ambientC: '18,5',
		stopChargeProven: 'yes',
		technicianName: 'Ilse Fenwick',
		licenceNumber: 'EL-40917',
		handoverName: 'Wren Tamsin',
		technicianSignature: SIGNATURE,
		ownerSignature: SIGNATURE,
		cautionsAcknowledged: 'yes',
		...over
	});

const DAY = new Date('2026-12-01T09:30:00Z');

describe('commissioning input', () => {
	it('reads decimal commas, blanks as not measured, and insists on licence and cautions', () => {
		const ok = form({ ambientC: '' });
		expect(ok.moduleOcvV).toEqual([[50.6, 50.62]]);
		expect(ok.ambientC).toBeNull();
		expect(
			commissioningSchema.safeParse({ ...ok, licenceNumber: ' ', cautionsAcknowledged: 'yes' })
				.success
		).toBe(false);
		const noCautions = commissioningSchema.safeParse({
			technicianName: 'Ilse Fenwick',
			licenceNumber: 'EL-40917'
		});
		expect(noCautions.success).toBe(false);
		expect(noCautions.error?.issues.map((i) => i.path.join('.'))).toContain('cautionsAcknowledged');
		expect(commissioningSchema.safeParse({ ...ok, insulationMohm: 'lots' }).success).toBe(false);
		// The preview reads what it can: an unreadable value counts as not measured.
		expect(
			draftMeasurementsSchema.parse({ insulationMohm: 'lots', 'stringVoltageV.1': '101,2' })
		).toMatchObject({ insulationMohm: null, stringVoltageV: [101.2] });
	});

	it('gives the same preview for an untouched checklist with or without the form reader', async () => {
		// The page fetches the reader with the first reading typed, so before that it shows
		// the verdicts of "nothing measured": they must be those of a blank form read fully.
		const { system } = await makeSystem({ series: 3, parallel: 2 });
		const sys = (await loadSystemForCommissioning(db, tech, system.id)).evaluationSystem;
		const blank: Record<string, string> = {
			interStringDiffV: '',
			insulationTestV: '',
			insulationMohm: '',
			polarityChecked: '',
			torqueConfirmed: '',
			deviceRatingA: '',
			deviceDcRatingV: '',
			ambientC: '',
			stopChargeProven: '',
			technicianName: 'Ilse Fenwick',
			licenceNumber: 'EL-40917',
			handoverName: 'Wren Tamsin'
		};
		for (let s = 1; s <= 2; s++) {
			blank[`stringVoltageV.${s}`] = '';
			for (let p = 1; p <= 3; p++) blank[`moduleOcvV.${s}.${p}`] = '';
		}
		const withReader = evaluateCommissioning(sys, draftMeasurements(blank));
		expect(evaluateCommissioning(sys, {})).toEqual(withReader);
		expect(withReader.items.every((i) => i.status === 'not_measured')).toBe(true);
	});
});

describe('submitCommissioning', () => {
	it('stores a failing insulation test as a fail and leaves the modules as they were', async () => {
		const { system, serials } = await makeSystem();
		const preview = evaluateDraft(
			await loadSystemForCommissioning(db, tech, system.id),
			form({ insulationMohm: '0,4' })
		);
		expect(preview.overall).toBe('fail');
		const r = await submitCommissioning(db, tech, system.id, form({ insulationMohm: '0,4' }), DAY);
		expect(r.overall).toBe('fail');
		expect(r.certificateNo).toBeNull();
		const insulation = r.items.find((i) => i.key === 'insulation')!;
		expect(insulation.status).toBe('fail');
		expect(insulation.reason).toMatch(
			/0\.4 MΩ at 500 V is below the 1\.0 MΩ minimum of IEC 60364-6:2016 Table 6\.1/
		);
		const [row] = await db.select().from(commissionings).where(eq(commissionings.id, r.id));
		expect(row.overall).toBe('fail');
		expect(JSON.parse(row.measurements).insulation).toEqual({
			testVoltageV: 500,
			measuredMohm: 0.4
		});
		const mods = await db.select().from(modules).where(inArray(modules.serial, serials));
		expect(mods.every((m) => m.state === 'installed' && m.warrantyStartsOn === null)).toBe(true);
		const [sys] = await db.select().from(systems).where(eq(systems.id, system.id));
		expect(sys.status).toBe('planned');
		await expect(certificateData(db, tech, r.id)).rejects.toThrow(/did not pass/);
	});

	it('commissions on a pass: certificate number, modules, warranty, events, audit, e-mail; a repeat is refused', async () => {
		const { system, serials } = await makeSystem();
		// A failed attempt first: it can be corrected and submitted again.
		await submitCommissioning(db, tech, system.id, form({ polarityChecked: 'no' }), DAY);
		const r = await submitCommissioning(db, tech, system.id, form(), DAY);
		expect(r.overall).toBe('pass');
		expect(r.certificateNo).toMatch(/^PLC-2026-\d{5}$/);
		expect(r.mail).toEqual({
			to: 'dealer@saltmarsh.example',
			sent: true,
			owner: { to: 'wren@heron.example', sent: true }
		});

		const [sys] = await db.select().from(systems).where(eq(systems.id, system.id));
		expect(sys.status).toBe('commissioned');
		const mods = await db.select().from(modules).where(inArray(modules.serial, serials));
		for (const m of mods) {
			expect(m.state).toBe('commissioned');
			expect(m.commissionedAt?.toISOString()).toBe(DAY.toISOString());
			// TC-HC-48 terms (invented demo): 15 years.
			expect([m.warrantyStartsOn, m.warrantyEndsOn]).toEqual(['2026-12-01', '2041-12-01']);
			expect(JSON.parse(m.warrantyTerms!)).toEqual({
				years: 15,
				ratedCycles: 20000,
				endRetentionPct: 80,
				referenceTempC: 25,
				hotTempC: 55,
				hotRatedCycles: 4000,
				usableWh: 2300,
				ratedAh: 46.5
			});
		}
		const events = await db
			.select()
			.from(moduleEvents)
			.where(
				inArray(
					moduleEvents.moduleId,
					mods.map((m) => m.id)
				)
			);
		expect(events.filter((e) => e.kind === 'commissioned')).toHaveLength(2);
		const audit = await db.select().from(auditLog).where(inArray(auditLog.entityId, serials));
		expect(audit.filter((a) => a.action === 'module.commission')).toHaveLength(2);

		const outbox = await listOutbox(db);
		const mails = outbox.filter((m) => m.subject.includes(r.certificateNo!));
		expect(mails.map((m) => m.toAddr).sort()).toEqual([
			'dealer@saltmarsh.example',
			'wren@heron.example'
		]);
		// Every e-mail leads to its record: the dealer's copy to the certificate's own page; the
		// owner, who has no account, gets the public verification address instead.
		const dealerMail = mails.find((m) => m.toAddr === 'dealer@saltmarsh.example');
		expect(dealerMail?.text).toContain(`/commissionings/${r.id}\n`);
		const ownerMail = mails.find((m) => m.toAddr === 'wren@heron.example');
		expect(ownerMail?.text).not.toContain('/commissionings/');
		expect(ownerMail?.text).toContain(`/verify/${r.certificateNo}`);

		await expect(submitCommissioning(db, tech, system.id, form(), DAY)).rejects.toThrow(
			/already commissioned/
		);
		const attempts = await db
			.select()
			.from(commissionings)
			.where(eq(commissionings.systemId, system.id));
		expect(attempts.map((a) => a.overall)).toEqual(['fail', 'pass']);
	});

	it('gives unique, consecutive certificate numbers and mails the assembler for its own sites', async () => {
		const a = await makeSystem({ dealer: null });
		const b = await makeSystem({ dealer: null });
		const [ra, rb] = await Promise.all([
			submitCommissioning(db, tech, a.system.id, form(), DAY),
			submitCommissioning(db, tech, b.system.id, form(), DAY)
		]);
		const nums = [ra.certificateNo!, rb.certificateNo!]
			.map((n) => Number(n.slice(-5)))
			.sort((x, y) => x - y);
		expect(nums[1] - nums[0]).toBe(1);
		expect(ra.mail?.to).toBe('office@tidewater.example');
	});

	it('dates the commissioning, warranty start and certificate by the assembler’s calendar (Etc/GMT-10)', async () => {
		// The demo assembler keeps Etc/GMT-10 (UTC+10). 22:00 UTC on 30 November is 08:00 on
		// 1 December there (hand-computed offset), so every business date is 1 December.
		const { system, serials } = await makeSystem();
		const at = new Date('2026-11-30T22:00:00Z');
		const r = await submitCommissioning(db, tech, system.id, form(), at);
		expect(r.commissionedOn).toBe('2026-12-01');
		const mods = await db.select().from(modules).where(inArray(modules.serial, serials));
		for (const m of mods) expect(m.warrantyStartsOn).toBe('2026-12-01');
		// One second before local midnight is still 30 November there.
		const other = await makeSystem();
		const before = await submitCommissioning(
			db,
			tech,
			other.system.id,
			form(),
			new Date('2026-11-30T13:59:59Z')
		);
		expect(before.commissionedOn).toBe('2026-11-30');
	});

	it('numbers certificates past 99,999 in a year by number, not by text', async () => {
		// Text order would put PLC-2031-100000 before PLC-2031-99999 and hand out 100000 twice.
		const { system } = await makeSystem();
		await db.insert(commissionings).values(
			['PLC-2031-99999', 'PLC-2031-100000'].map((certificateNo) => ({
				systemId: system.id,
				certificateNo,
				overall: 'pass' as const,
				technicianUserId: tech.userId!,
				technicianName: 'Ilse Fenwick',
				licenceNumber: 'EL-40917',
				measurements: '{}',
				items: '[]',
				commissionedOn: '2031-06-01'
			}))
		);
		const r = await submitCommissioning(
			db,
			tech,
			system.id,
			form(),
			new Date('2031-06-02T01:00:00Z')
		);
		expect(r.certificateNo).toBe('PLC-2031-100001');
	});

	it('refuses a system with an empty slot', async () => {
		const { system } = await makeSystem({ leaveEmpty: 1 });
		await expect(submitCommissioning(db, tech, system.id, form(), DAY)).rejects.toThrow(
			/no module recorded at string 1 position 2/
		);
	});
});

describe('dealer scope', () => {
	it("lets a dealer's people reach only their own organisation's systems and certificates", async () => {
		const { system } = await makeSystem();
		await expect(loadSystemForCommissioning(db, saltmarshDealer, system.id)).resolves.toMatchObject(
			{ system: { id: system.id } }
		);
		await expect(loadSystemForCommissioning(db, ridgelineTech, system.id)).rejects.toThrow(
			/not in the register/
		);
		await expect(submitCommissioning(db, ridgelineTech, system.id, form(), DAY)).rejects.toThrow(
			/not in the register/
		);
		const r = await submitCommissioning(db, tech, system.id, form(), DAY);
		await expect(certificateData(db, saltmarshDealer, r.id)).resolves.toMatchObject({
			certificateNo: r.certificateNo
		});
		await expect(certificateData(db, ridgelineTech, r.id)).rejects.toThrow(/not in the register/);
	});
});

describe('certificate PDF', () => {
	it('is a PDF carrying the certificate number, every serial and no character WinAnsi lacks', async () => {
		const { system, serials } = await makeSystem({ series: 2, parallel: 2 });
		const r = await submitCommissioning(
			db,
			tech,
			system.id,
			form({
				'moduleOcvV.2.1': '50,61',
				'moduleOcvV.2.2': '50,63',
				'stringVoltageV.2': '101,24',
				deviceRatingA: '400'
			}),
			DAY
		);
		expect(r.overall).toBe('pass');
		const data = await certificateData(db, tech, r.id);
		expect(data.modules.map((m) => m.serial)).toEqual(serials);
		const bytes = await certificatePdf(data);
		expect(Buffer.from(bytes.subarray(0, 5)).toString('latin1')).toBe('%PDF-');

		// Page text is in Flate-compressed content streams, as hex strings in WinAnsi.
		const raw = Buffer.from(bytes).toString('latin1');
		const text = [...raw.matchAll(/stream\r?\n([\s\S]*?)\r?\nendstream/g)]
			.map((m) => {
				try {
					return inflateSync(Buffer.from(m[1], 'latin1')).toString('latin1');
				} catch {
					return '';
				}
			})
			.join('\n')
			.toUpperCase();
		const hex = (s: string) => Buffer.from(s, 'latin1').toString('hex').toUpperCase();
		expect(text).toContain(hex(r.certificateNo!));
		expect(text).toContain(hex('Commissioning certificate'));
		for (const s of serials) expect(text).toContain(hex(s));
		expect(text).toContain(hex('MOhm'));
		expect(text).toContain(
			hex('Local electrical codes and installation standards take precedence')
		);

		const parsed = await PDFDocument.load(bytes);
		expect(parsed.getTitle()).toContain(r.certificateNo!);
		expect(parsed.getPage(0).getSize()).toEqual({ width: 595.28, height: 841.89 });
	});
});
