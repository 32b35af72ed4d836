import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { auditLog, moduleCellLots, moduleEvents, modules } from '$lib/server/db/schema';
import { allocateSerials } from '$lib/server/services/allocations';
import { registerBuild, shiftBuildCount } from '$lib/server/services/builds';
import {
	findModule,
	getModuleRecord,
	getPublicRecord,
	publicRecordEtag,
	serialFromScan
} from '$lib/server/services/modules';
import { labelsForAllocation, recordReprint } from '$lib/server/services/labels';
import { retireModel } from '$lib/server/services/models';
import { parseSerial } from '$lib/domain/serial';
import { buildDigitalLink } from '$lib/domain/gs1';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { ALL_CHECKS, assignToDealer, makeModules, modelId } from '../factories/modules';

let db: Db;
let workshop: Actor;
let admin: Actor;
beforeAll(async () => {
	db = await createSeededDb();
	workshop = await actorFor(db, 'workshop@tidewater.example');
	admin = await actorFor(db, 'admin@tidewater.example');
});

describe('serial allocation', () => {
	it('gives a contiguous run with valid check characters', async () => {
		const alloc = await allocateSerials(db, workshop, {
			modelId: await modelId(db, 'TC-HC-24'),
			count: 24
		});
		const rows = await db.select().from(modules).where(eq(modules.allocationId, alloc.id));
		expect(rows).toHaveLength(24);
		const numbers = rows.map((r) => {
			const p = parseSerial(r.serial);
			expect(p.ok).toBe(true);
			return p.ok ? p.number : -1;
		});
		expect(numbers).toEqual(Array.from({ length: 24 }, (_, i) => numbers[0] + i));
		expect(rows.every((r) => r.serial.startsWith('PL24-'))).toBe(true);
	});

	it('never reuses or skips under concurrent requests', async () => {
		const id = await modelId(db, 'TC-HC-12');
		const runs = await Promise.all(
			Array.from({ length: 10 }, () => allocateSerials(db, workshop, { modelId: id, count: 7 }))
		);
		const all = (await db.select({ serial: modules.serial }).from(modules))
			.map((r) => r.serial)
			.filter((s) => s.startsWith('PL12-'));
		const nums = all
			.map((s) => (parseSerial(s) as { number: number }).number)
			.sort((a, b) => a - b);
		expect(new Set(all).size).toBe(all.length);
		expect(nums).toEqual(Array.from({ length: nums.length }, (_, i) => i + 1));
		expect(runs.map((r) => r.count).reduce((a, b) => a + b)).toBe(70);
	});

	it('refuses counts outside 1..1000 and retired models', async () => {
		await expect(
			allocateSerials(db, workshop, { modelId: await modelId(db), count: 0 })
		).rejects.toThrow(/between 1 and 1000/i);
		await expect(
			allocateSerials(db, workshop, { modelId: await modelId(db), count: 1001 })
		).rejects.toThrow(/between 1 and 1000/i);
	});
});

describe('build registration', () => {
	it('counts the builds of the last 8 hours for the bench, the exact boundary included', async () => {
		const now = new Date('2031-05-06T16:00:00Z');
		const before = await shiftBuildCount(db, workshop, now);
		const [a, b, c] = await makeModules(db, workshop, { count: 3 });
		const build = (serial: string, at: string) =>
			registerBuild(
				db,
				workshop,
				serial,
				{ cellLots: ['HCL-2611-A'], checks: ALL_CHECKS, notes: '' },
				new Date(at)
			);
		await build(a, '2031-05-06T07:59:59.999Z'); // 8 h and 1 ms ago: the shift before
		await build(b, '2031-05-06T08:00:00.000Z'); // exactly 8 h ago: this shift
		await build(c, '2031-05-06T15:59:00.000Z');
		expect(await shiftBuildCount(db, workshop, now)).toBe(before + 2);
	});

	it('records lots, checks, event and audit; a second build is refused', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1 });
		await registerBuild(db, workshop, serial, {
			cellLots: ['HCL-2611-A', 'HCL-2611-B'],
			checks: ALL_CHECKS,
			notes: 'first of shift'
		});
		const rec = await getModuleRecord(db, workshop, serial);
		expect(rec.module.state).toBe('built');
		expect(rec.module.cellLots).toEqual(['HCL-2611-A', 'HCL-2611-B']);
		expect(rec.events.map((e) => e.kind)).toEqual(['built', 'allocated']);
		const lots = await db
			.select()
			.from(moduleCellLots)
			.where(eq(moduleCellLots.moduleId, rec.module.id));
		expect(lots.map((l) => l.lotCode).sort()).toEqual(['HCL-2611-A', 'HCL-2611-B']);
		const audit = await db.select().from(auditLog).where(eq(auditLog.entityId, serial));
		expect(audit.map((a) => a.action)).toContain('module.build');
		await expect(
			registerBuild(db, workshop, serial, { cellLots: ['X1'], checks: ALL_CHECKS, notes: '' })
		).rejects.toThrow(/already built/);
	});

	it('lets only one of two simultaneous builds of the same serial through', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1 });
		const input = { cellLots: ['HCL-2611-A'], checks: ALL_CHECKS, notes: '' };
		const results = await Promise.allSettled([
			registerBuild(db, workshop, serial, input),
			registerBuild(db, workshop, serial, input)
		]);
		expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
		const events = await db
			.select()
			.from(moduleEvents)
			.innerJoin(modules, eq(moduleEvents.moduleId, modules.id))
			.where(eq(modules.serial, serial));
		expect(events.filter((e) => e.module_events.kind === 'built')).toHaveLength(1);
	});

	it('refuses a mistyped serial (check character) and an unknown one, changing nothing', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1 });
		const typo = serial.slice(0, -1) + (serial.endsWith('A') ? 'B' : 'A');
		await expect(
			registerBuild(db, workshop, typo, { cellLots: ['X1'], checks: ALL_CHECKS, notes: '' })
		).rejects.toThrow(/check character/);
		await expect(
			registerBuild(db, workshop, 'PL48-26-999999' + 'X', {
				cellLots: ['X1'],
				checks: ALL_CHECKS,
				notes: ''
			})
		).rejects.toThrow();
		expect((await findModule(db, workshop, serial)).state).toBe('allocated');
	});

	it('refuses a module of a retired model', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, code: 'TC-HC-24' });
		await retireModel(db, admin, await modelId(db, 'TC-HC-24'));
		await expect(
			registerBuild(db, workshop, serial, { cellLots: ['X1'], checks: ALL_CHECKS, notes: '' })
		).rejects.toThrow(/retired/);
	});
});

describe('scans, scope and the public record', () => {
	it('accepts a bare serial, the /m/ URL and a Digital Link with the right GTIN only', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, code: 'TC-HC-48' });
		const rec = await getModuleRecord(db, workshop, serial);
		expect(await serialFromScan(db, workshop, serial.toLowerCase())).toBe(serial);
		expect(
			await serialFromScan(db, workshop, `https://register.tidewater.example/m/${serial}`)
		).toBe(serial);
		expect(
			await serialFromScan(
				db,
				workshop,
				buildDigitalLink('https://x.example', rec.model.gtin!, serial)
			)
		).toBe(serial);
		await expect(
			serialFromScan(db, workshop, buildDigitalLink('https://x.example', '09521234543213', serial))
		).rejects.toThrow(/does not belong/);
		await expect(serialFromScan(db, workshop, 'https://shop.example/item/42')).rejects.toThrow(
			/not a Packledger label/
		);
	});

	it('answers another dealer’s serial exactly like an unknown one', async () => {
		const [mine, theirs] = await makeModules(db, workshop, { count: 2, built: 2 });
		await assignToDealer(db, [mine], 'Saltmarsh Solar');
		await assignToDealer(db, [theirs], 'Ridgeline Off-Grid Supply');
		const saltmarsh = await actorFor(db, 'dealer@saltmarsh.example');
		expect((await getModuleRecord(db, saltmarsh, mine)).module.serial).toBe(mine);
		const refusal = await getModuleRecord(db, saltmarsh, theirs).catch((e) => e);
		const unknown = await getModuleRecord(db, saltmarsh, 'PL48-26-999998' + 'Z').catch((e) => e);
		expect(refusal.status).toBe(404);
		expect(refusal.message).toMatch(/No module .* is in the register/);
		expect(unknown.status).toBe(404);
	});

	it('public record has rated data and contact but no customer data', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await assignToDealer(db, [serial], 'Saltmarsh Solar');
		const rec = await getPublicRecord(db, serial, '2026-12-01');
		expect(rec.model.ratedCapacityAh).toBe(46.5);
		expect(rec.model.nominalVoltageV).toBeCloseTo(22 * 2.35, 6);
		expect(rec.contact).toEqual({
			name: 'Saltmarsh Solar',
			email: 'dealer@saltmarsh.example',
			kind: 'dealer'
		});
		expect(rec.warranty.state).toBe('not-started');
		expect(JSON.stringify(rec)).not.toMatch(/site|owner|address/i);
	});

	it('a cached public record follows every write, inside or outside the write lock, and its validator with it', async () => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		const first = await getPublicRecord(db, serial, '2026-12-01');
		expect(first.contact.kind).toBe('assembler');
		expect(await getPublicRecord(db, serial, '2026-12-01')).toBe(first); // the same object: cached
		// A write that bypasses withWriteLock (as a script or another tool might) still counts.
		await db.$client.execute({
			sql: "UPDATE modules SET state = 'commissioned', warranty_starts_on = '2026-01-05', warranty_ends_on = '2036-01-05' WHERE serial = ?",
			args: [serial]
		});
		const after = await getPublicRecord(db, serial, '2026-12-01');
		expect(after.warranty).toMatchObject({ state: 'active', endsOn: '2036-01-05' });
		expect(publicRecordEtag(after, 'b1')).not.toBe(publicRecordEtag(first, 'b1'));
		expect(publicRecordEtag(after, 'b1')).toBe(publicRecordEtag(after, 'b1'));
		expect(publicRecordEtag(after, 'b2')).not.toBe(publicRecordEtag(after, 'b1'));
		// The day is part of the key: the same module read for the day after the warranty ends.
		expect((await getPublicRecord(db, serial, '2036-01-06')).warranty.state).toBe('ended');
		await expect(getPublicRecord(db, 'PL48-26-999998Z', '2026-12-01')).rejects.toThrow(
			/not a module serial/
		);
	});

	it('labels carry the Digital Link for GTIN models and /m/ otherwise; a reprint is on the timeline', async () => {
		const a48 = await allocateSerials(db, workshop, {
			modelId: await modelId(db, 'TC-HC-48'),
			count: 2
		});
		const a12 = await allocateSerials(db, workshop, {
			modelId: await modelId(db, 'TC-HC-12'),
			count: 2
		});
		const l48 = await labelsForAllocation(db, a48.id, 'https://register.tidewater.example');
		const l12 = await labelsForAllocation(db, a12.id, 'https://register.tidewater.example');
		expect(l48.labels[0].payload).toMatch(
			/^https:\/\/register\.tidewater\.example\/01\/\d{14}\/21\/PL48-/
		);
		expect(l12.labels[0].payload).toBe(
			`https://register.tidewater.example/m/${l12.labels[0].serial}`
		);
		expect(l12.labels[0].qrSvg).toMatch(/^<svg/);
		await recordReprint(db, workshop, l12.labels[0].serial, 'scuffed');
		const rec = await getModuleRecord(db, workshop, l12.labels[0].serial);
		expect(rec.events[0].kind).toBe('label_reprinted');
	});
});
