import { beforeEach, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { auditLog, moduleModels, modules } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { modelInputSchema, type ModelInput } from '$lib/schemas/model';
import {
	createModel,
	deleteModel,
	getModel,
	listModels,
	reinstateModel,
	retireModel,
	updateModel
} from '$lib/server/services/models';
import { actorFor, createSeededDb } from '../factories/db';

/** A form submission as the browser sends it: every value a string. */
const FORM: Record<string, string> = {
	code: 'TC-HC-36',
	name: 'TC-HC 36 V module',
	variant: '36',
	gtin: '',
	massKg: '25.2',
	cellsSeries: '16',
	cellMinV: '1.8',
	cellNominalV: '2.35',
	cellMaxV: '2.75',
	ratedAh: '64',
	usableWh: '2300',
	maxContinuousC: '3',
	burstC: '8',
	burstSeconds: '10',
	chargeTempMinC: '-30',
	chargeTempMaxC: '55',
	dischargeTempMinC: '-40',
	dischargeTempMaxC: '60',
	minCapacityAh: '62',
	maxDcirMohm: '4.5',
	maxCellSpreadMv: '20',
	minInsulationMohm: '100',
	warrantyYears: '15',
	ratedCycles: '20000',
	referenceTempC: '25',
	endRetentionPct: '80',
	hotTempC: '55',
	hotRatedCycles: '4000'
};

const parse = (over: Record<string, string> = {}) =>
	modelInputSchema.safeParse({ ...FORM, ...over });
const valid = (over: Record<string, string> = {}): ModelInput => {
	const r = parse(over);
	if (!r.success) throw new Error(JSON.stringify(r.error.issues));
	return r.data;
};
const messageAt = (over: Record<string, string>, path: string) => {
	const r = parse(over);
	return r.success ? undefined : r.error.issues.find((i) => i.path.join('.') === path)?.message;
};

describe('modelInputSchema', () => {
	it('reads numbers from form text and a blank GTIN as none', () => {
		const m = valid();
		expect(m.cellsSeries).toBe(16);
		expect(m.chargeTempMinC).toBe(-30);
		expect(m.gtin).toBeNull();
	});

	it('stores a valid GTIN-13 as GTIN-14', () => {
		// 4006381333931 is the worked example of the GS1 check digit calculator.
		expect(valid({ gtin: '4006381333931' }).gtin).toBe('04006381333931');
	});

	it('rejects a GTIN with a wrong check digit and names the digit it should be', () => {
		expect(messageAt({ gtin: '4006381333932' }, 'gtin')).toMatch(
			/check digit should be 1; probably mistyped/
		);
	});

	it('attaches cross-field problems to the field to fix', () => {
		expect(messageAt({ cellMinV: '2.5' }, 'cellMinV')).toMatch(/below the nominal/);
		expect(messageAt({ burstC: '2' }, 'burstC')).toMatch(/continuous/);
		expect(messageAt({ minCapacityAh: '70' }, 'minCapacityAh')).toMatch(/rated 64 Ah/);
		expect(messageAt({ hotTempC: '20' }, 'hotTempC')).toMatch(/above the reference/);
		expect(messageAt({ hotRatedCycles: '30000' }, 'hotRatedCycles')).toMatch(/fewer/);
		expect(messageAt({ chargeTempMaxC: '-40' }, 'chargeTempMaxC')).toMatch(/above the lowest/);
	});

	it('refuses usable energy above cells × maximum cell voltage × Ah, showing the sum', () => {
		// 16 × 2.75 V × 64 Ah = 2816 Wh
		expect(messageAt({ usableWh: '2900' }, 'usableWh')).toMatch(/16 × 2.75 V × 64 Ah = 2,816 Wh/);
		expect(parse({ usableWh: '2816' }).success).toBe(true);
	});

	it('says which required number is missing, and reports every problem at once', () => {
		const r = parse({ ratedAh: '', variant: 'forty-eight' });
		expect(r.success).toBe(false);
		const paths = r.error!.issues.map((i) => i.path.join('.'));
		expect(paths).toContain('ratedAh');
		expect(paths).toContain('variant');
		expect(r.error!.issues.find((i) => i.path[0] === 'ratedAh')!.message).toMatch(
			/Enter the rated capacity/
		);
	});
});

describe('module model service', () => {
	let db: Db;
	let admin: Actor;
	const modelByCode = async (code: string) =>
		(await db.select().from(moduleModels).where(eq(moduleModels.code, code)))[0];
	const auditFor = (id: number) =>
		db
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.entity, 'module_model'), eq(auditLog.entityId, String(id))));
	const addModule = (modelId: number, serial: string) =>
		db.insert(modules).values({ modelId, serial });

	beforeEach(async () => {
		db = await createSeededDb();
		admin = await actorFor(db, 'admin@tidewater.example');
	});

	it('creates a model and records it in the audit trail', async () => {
		const id = await createModel(db, admin, valid({ gtin: '4006381333931' }));
		const m = await getModel(db, id);
		expect(m).toMatchObject({
			code: 'TC-HC-36',
			gtin: '04006381333931',
			moduleCount: 0,
			retiredAt: null
		});
		const [entry] = await auditFor(id);
		expect(entry).toMatchObject({ action: 'model.create', actorLabel: 'admin@tidewater.example' });
		expect(JSON.parse(entry.after!)).toMatchObject({ code: 'TC-HC-36' });
	});

	it('refuses a duplicate code, GTIN, or a variant an active model uses', async () => {
		await expect(createModel(db, admin, valid({ code: 'TC-HC-48' }))).rejects.toThrow(
			ConflictError
		);
		const seeded = await modelByCode('TC-HC-48');
		await expect(createModel(db, admin, valid({ gtin: seeded.gtin! }))).rejects.toThrow(
			/already assigned to TC-HC-48/
		);
		await expect(createModel(db, admin, valid({ variant: '48' }))).rejects.toThrow(
			/Variant 48 is already used by TC-HC-48/
		);
	});

	it('allows the variant of a retired model, and then refuses to reinstate that model', async () => {
		const old = await modelByCode('TC-HC-48');
		await retireModel(db, admin, old.id);
		await createModel(db, admin, valid({ code: 'TC-HC-48B', variant: '48' }));
		await expect(reinstateModel(db, admin, old.id)).rejects.toThrow(
			/Variant 48 is already used by TC-HC-48B/
		);
	});

	it('locks code, variant and cells in series of a model in use, but lets the rest change', async () => {
		const id = await createModel(db, admin, valid());
		await addModule(id, 'PL36-26-0000010');
		await expect(updateModel(db, admin, id, valid({ code: 'TC-HC-36X' }))).rejects.toThrow(
			InvalidInputError
		);
		const err = await updateModel(
			db,
			admin,
			id,
			valid({ variant: '36A', cellsSeries: '17', usableWh: '2400' })
		).catch((e) => e);
		expect(err).toBeInstanceOf(InvalidInputError);
		expect(err.message).toMatch(/used by 1 module/);
		expect(err.issues.map((i: { path: string }) => i.path).sort()).toEqual([
			'cellsSeries',
			'variant'
		]);

		const result = await updateModel(
			db,
			admin,
			id,
			valid({ name: 'TC-HC 36 V module, rev. B', ratedCycles: '22000' })
		);
		expect(result.warrantyTermsChanged).toBe(true);
		expect((await getModel(db, id)).name).toBe('TC-HC 36 V module, rev. B');
		const entries = await auditFor(id);
		const update = entries.find((e) => e.action === 'model.update')!;
		expect(JSON.parse(update.before!).ratedCycles).toBe(20000);
		expect(JSON.parse(update.after!).ratedCycles).toBe(22000);
	});

	it('lets an unused model change its code and variant', async () => {
		const id = await createModel(db, admin, valid());
		const result = await updateModel(db, admin, id, valid({ code: 'TC-HC-36R', variant: '36R' }));
		expect(result.warrantyTermsChanged).toBe(false);
		expect(await getModel(db, id)).toMatchObject({ code: 'TC-HC-36R', variant: '36R' });
	});

	it('retires and reinstates, hiding retired models unless asked', async () => {
		const id = await createModel(db, admin, valid());
		await retireModel(db, admin, id, new Date('2026-03-01T09:00:00Z'));
		expect((await getModel(db, id)).retiredAt).toEqual(new Date('2026-03-01T09:00:00Z'));
		expect((await listModels(db)).map((m) => m.id)).not.toContain(id);
		expect((await listModels(db, { includeRetired: true })).map((m) => m.id)).toContain(id);
		await expect(retireModel(db, admin, id)).rejects.toThrow(/already retired/);

		await reinstateModel(db, admin, id);
		expect((await getModel(db, id)).retiredAt).toBeNull();
		expect((await auditFor(id)).map((e) => e.action)).toEqual([
			'model.create',
			'model.retire',
			'model.reinstate'
		]);
	});

	it('counts modules per model in the list', async () => {
		const m48 = await modelByCode('TC-HC-48');
		await addModule(m48.id, 'PL48-26-0000010');
		await addModule(m48.id, 'PL48-26-0000028');
		const list = await listModels(db);
		expect(list.find((m) => m.code === 'TC-HC-48')!.moduleCount).toBe(2);
		expect(list.find((m) => m.code === 'TC-HC-12')!.moduleCount).toBe(0);
	});

	it('refuses to delete a model in use and deletes an unused one', async () => {
		const m48 = await modelByCode('TC-HC-48');
		await addModule(m48.id, 'PL48-26-0000010');
		await expect(deleteModel(db, admin, m48.id)).rejects.toThrow(
			'TC-HC-48 is in use by 1 module — retire it instead.'
		);

		const id = await createModel(db, admin, valid());
		await deleteModel(db, admin, id);
		await expect(getModel(db, id)).rejects.toThrow(NotFoundError);
		const entries = await auditFor(id);
		expect(entries.map((e) => e.action)).toEqual(['model.create', 'model.delete']);
		expect(JSON.parse(entries[1].before!)).toMatchObject({ code: 'TC-HC-36' });
	});
});
