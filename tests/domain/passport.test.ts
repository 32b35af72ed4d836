/**
 * The battery passport JSON against our draft-04 schemas of the Battery Pass data model
 * v1.2.0 (written from BatteryPass/io.BatteryPass.*\/1.2.0 in batterypass/BatteryPassDataModel;
 * see src/lib/domain/passport-schema.ts), validated with an independent validator (ajv 8 +
 * ajv-draft-04), for each access tier.
 */
import { describe, expect, it } from 'vitest';
import Ajv from 'ajv-draft-04';
import {
	buildPassport,
	passportUrn,
	stateOfHealthPct,
	type PassportInput,
	type PassportTier
} from '$lib/domain/passport';
import { passportSchema } from '$lib/domain/passport-schema';
import { DEMO_MODELS, DEMO_PASSPORT_ITEMS } from '$lib/server/seed/demo-models';
import type { StoredItem } from '$lib/domain/passport-items';
import { passportStatusOf } from '$lib/domain/module-status';

const ajv = new Ajv({ allErrors: true });
const model48 = DEMO_MODELS.find((m) => m.code === 'TC-HC-48')!;
const model12 = DEMO_MODELS.find((m) => m.code === 'TC-HC-12')!;
const items = (code: string) => DEMO_PASSPORT_ITEMS[code] as Record<string, StoredItem>;

function input(tier: PassportTier, over: Partial<PassportInput> = {}): PassportInput {
	return {
		tier,
		serial: 'PL48-26-000123F',
		links: {
			record: 'https://reg.example/m/PL48-26-000123F',
			passport: 'https://reg.example/passport/PL48-26-000123F',
			json: 'https://reg.example/api/passport/PL48-26-000123F',
			digitalLink: 'https://reg.example/01/09521234600022/21/PL48-26-000123F'
		},
		issuer: { name: 'Tidewater Cellworks' },
		model: model48,
		items: items('TC-HC-48'),
		module: {
			builtAt: new Date('2026-10-05T08:10:00Z'),
			commissionedAt: new Date('2026-11-02T12:15:00Z'),
			state: 'commissioned'
		},
		evidence: {
			capacity: [
				{
					at: new Date('2026-10-06T07:30:00Z'),
					capacityAh: 46.4,
					temperatureC: 21.5,
					source: 'factory test'
				},
				{
					at: new Date('2026-11-30T09:00:00Z'),
					capacityAh: 41.85,
					temperatureC: 22,
					source: 'claim'
				}
			],
			throughput: [
				{ at: new Date('2026-11-30T09:00:00Z'), moduleWh: 230_000, cycles: null, source: 'claim' }
			],
			temperatures: [
				{
					at: new Date('2026-11-30T09:00:00Z'),
					averageCellC: 26,
					maximumCellC: 41,
					source: 'claim'
				}
			],
			negativeEvents: [
				{ at: new Date('2026-11-30T09:00:00Z'), text: 'Warranty claim: warm module' }
			]
		},
		history: [
			{ at: new Date('2026-10-05T08:10:00Z'), kind: 'built', summary: 'Built', by: 'Tobin Vale' }
		],
		now: new Date('2026-12-02T05:00:00Z'),
		...over
	};
}

const absentPaths = (p: { itemStatus: { path: string }[] }) => p.itemStatus.map((s) => s.path);
function validate(p: ReturnType<typeof buildPassport>) {
	const v = ajv.compile(passportSchema(p.tier, absentPaths(p)));
	const ok = v(p);
	return { ok, errors: v.errors };
}

describe('state of health and cycles (REFERENCES §2 worked examples)', () => {
	it('252 Ah of 280 Ah is 90.0 % (capacity-based state of health)', () => {
		expect(stateOfHealthPct(252, 280)).toBeCloseTo(90.0, 10);
	});
	it('refuses a rated capacity of zero and a negative measurement', () => {
		expect(() => stateOfHealthPct(10, 0)).toThrow(RangeError);
		expect(() => stateOfHealthPct(-1, 280)).toThrow(RangeError);
	});
	it('equivalent full cycles on the energy basis: 1 433 600 Wh over 14 336 Wh = 100.0', () => {
		const p = buildPassport(
			input('full', {
				model: { ...model48, usableWh: 14_336 },
				evidence: {
					capacity: [],
					throughput: [
						{
							at: new Date('2026-11-30T00:00:00Z'),
							moduleWh: 1_433_600,
							cycles: null,
							source: 'log'
						}
					],
					temperatures: [],
					negativeEvents: []
				}
			})
		);
		expect(p.performance.batteryCondition).toMatchObject({
			energyThroughput: 1433.6,
			numberOfFullCycles: { numberOfFullCyclesValue: 100 }
		});
		expect(
			(p.supplementary.condition as { equivalentFullCycles: { value: number; basis: string } })
				.equivalentFullCycles
		).toMatchObject({ value: 100, basis: expect.stringContaining('energy basis') });
	});
});

describe('general product information', () => {
	const p = buildPassport(input('public'));
	const g = p.generalProductInformation as Record<string, unknown>;
	it('keeps the model’s spellings and enumerations', () => {
		expect(g.warrentyPeriod).toBe('P180M'); // 15 years × 12 months
		expect(g.batteryStatus).toBe('Original');
		expect(g.batteryCategory).toBe('stationary');
		expect(Object.keys(p.performance)).toEqual(['batteryTechicalProperties']);
	});
	it('gives a passport URN that the model’s pattern ^urn:[a-z0-9]+:[a-z0-9]+$ accepts', () => {
		expect(passportUrn('Tidewater Cellworks', 'PL48-26-000123F')).toBe(
			'urn:tidewatercellworks:pl4826000123f'
		);
		expect(/^urn:[a-z0-9]+:[a-z0-9]+$/.test(String(g.batteryPassportIdentifier))).toBe(true);
	});
	it('derives voltages from the cells: 22 × 1.8 / 2.35 / 2.75 V (model record)', () => {
		const t = p.performance.batteryTechicalProperties as Record<string, number>;
		expect(t.minimumVoltage).toBeCloseTo(39.6, 9);
		expect(t.nominalVoltage).toBeCloseTo(51.7, 9);
		expect(t.maximumVoltage).toBeCloseTo(60.5, 9);
		// 5.1 mΩ entered in mΩ, the model's unit is the ohm
		expect(t.initialInternalResistance).toEqual([
			{ ohmicResistance: 0.0051, batteryComponent: 'module' }
		]);
	});
	it('a status recorded by the lifecycle takes precedence; scrapped is waste', () => {
		expect(passportStatusOf({ state: 'scrapped' })).toBe('waste');
		expect(passportStatusOf({ state: 'commissioned', lifecycleStatus: 'repurposed' })).toBe(
			'repurposed'
		);
		const r = buildPassport(
			input('public', { module: { ...input('public').module, lifecycleStatus: 'reused' } })
		);
		expect((r.generalProductInformation as { batteryStatus: string }).batteryStatus).toBe('Reused');
	});
});

describe('each tier validates against the Battery Pass v1.2.0 schemas', () => {
	for (const tier of ['public', 'restricted', 'full'] as const) {
		it(`${tier} tier, TC-HC-48 with all but three items provided`, () => {
			const p = buildPassport(input(tier));
			const r = validate(p);
			expect(r.errors ?? []).toEqual([]);
			expect(r.ok).toBe(true);
		});
	}

	it('public tier: nothing absent but the three gaps left in the demo, the condition and dismantling', () => {
		const p = buildPassport(input('public'));
		expect(absentPaths(p).sort()).toEqual(
			[
				'/performance/batteryTechicalProperties/temperatureRangeIdleState', // one number in the model; the range is in supplementary
				'/performance/batteryCondition',
				'/carbonFootprint/carbonFootprintPerformanceClass',
				'/circularity/dismantlingAndRemovalInformation',
				'/circularity/sparePartSources',
				'/circularity/renewableContent'
			].sort()
		);
		expect(p.itemStatus.find((s) => s.path === '/performance/batteryCondition')?.status).toBe(
			'withheld'
		);
		expect(p.supplementary).not.toHaveProperty('condition');
		expect(p.supplementary).not.toHaveProperty('history');
	});

	it('full tier: the condition carries the evidence, the rest is said to be not recorded', () => {
		const p = buildPassport(input('full'));
		const c = p.performance.batteryCondition as Record<string, unknown>;
		// 41.85 Ah of 46.5 Ah rated = 90.0 % state of health, so 10.0 % fade (REFERENCES §2 formula)
		expect(c.capacityFade).toEqual({ capacityFadeValue: 10, lastUpdate: '2026-11-30T09:00:00Z' });
		expect(c.remainingCapacity).toEqual({
			remainingCapacityValue: 41.85,
			lastUpdate: '2026-11-30T09:00:00Z'
		});
		// 230 000 Wh over 2 300 Wh usable = 100 equivalent full cycles
		expect(c.numberOfFullCycles).toEqual({
			numberOfFullCyclesValue: 100,
			lastUpdate: '2026-11-30T09:00:00Z'
		});
		expect(c.negativeEvents).toEqual([
			{ negativeEvent: 'Warranty claim: warm module', lastUpdate: '2026-11-30T09:00:00Z' }
		]);
		const notRecorded = p.itemStatus
			.filter((s) => s.status === 'not_recorded')
			.map((s) => s.path.split('/').at(-1));
		expect(notRecorded.sort()).toEqual(
			[
				'capacityThroughput',
				'stateOfCertifiedEnergy',
				'remainingEnergy',
				'remainingPowerCapability',
				'powerFade',
				'roundTripEfficiencyFade',
				'evolutionOfSelfDischarge',
				'currentSelfDischargingRate',
				'internalResistanceIncrease',
				'remainingRoundTripEnergyEfficiency',
				'stateOfCharge'
			].sort()
		);
		expect(p.supplementary.history).toHaveLength(1);
		expect(
			(p.circularity as Record<string, unknown>).dismantlingAndRemovalInformation
		).toBeDefined();
	});

	it('restricted tier (access link) has the condition but not the history', () => {
		const p = buildPassport(input('restricted'));
		expect(p.performance).toHaveProperty('batteryCondition');
		expect(p.supplementary).not.toHaveProperty('history');
		expect(validate(p).ok).toBe(true);
	});

	it('an item not provided is listed, never filled in (TC-HC-12 without a GTIN, not yet built)', () => {
		const p = buildPassport(
			input('public', {
				serial: 'PL12-26-000004K',
				model: model12,
				items: items('TC-HC-12'),
				module: { builtAt: null, commissionedAt: null, state: 'allocated' }
			})
		);
		const t = p.performance.batteryTechicalProperties as Record<string, unknown>;
		expect(t).not.toHaveProperty('initialSelfDischarge');
		expect(t).not.toHaveProperty('originalPowerCapability');
		const status = Object.fromEntries(p.itemStatus.map((s) => [s.path, s.status]));
		expect(status['/performance/batteryTechicalProperties/initialSelfDischarge']).toBe(
			'not_yet_provided'
		);
		expect(status['/generalProductInformation/manufacturingDate']).toBe('not_applicable_yet');
		expect(status['/generalProductInformation/puttingIntoService']).toBe('not_applicable_yet');
		expect(status['/carbonFootprint']).toBe('not_yet_provided');
		expect(p).not.toHaveProperty('carbonFootprint');
		expect(validate(p).ok).toBe(true);
	});
});

describe('the schemas can fail', () => {
	const strict = (tier: PassportTier, p: unknown, absent: string[]) =>
		ajv.compile(passportSchema(tier, absent))(p);
	it('a public passport carrying the condition is refused', () => {
		const full = buildPassport(input('full'));
		const forged = { ...full, tier: 'public' };
		expect(strict('public', forged, absentPaths(full))).toBe(false);
	});
	it('a missing required attribute not declared in itemStatus is refused', () => {
		const p = buildPassport(input('public'));
		const g = { ...(p.generalProductInformation as Record<string, unknown>) };
		delete g.batteryMass;
		expect(strict('public', { ...p, generalProductInformation: g }, absentPaths(p))).toBe(false);
	});
	it('a status outside the model’s enumeration, or a month-only warranty, is refused', () => {
		const p = buildPassport(input('public'));
		for (const bad of [
			{ batteryStatus: 'original' },
			{ warrentyPeriod: '--12' },
			{ batteryCategory: 'home' }
		])
			expect(
				strict(
					'public',
					{ ...p, generalProductInformation: { ...p.generalProductInformation, ...bad } },
					absentPaths(p)
				)
			).toBe(false);
	});
	it('a CAS number the model’s constraint rejects is refused', () => {
		const p = buildPassport(input('public'));
		const mc = p.materialComposition as { hazardousSubstances: Record<string, unknown>[] };
		const bad = {
			...mc,
			hazardousSubstances: [
				{ ...mc.hazardousSubstances[0], hazardousSubstanceIdentifier: '7439932' }
			]
		};
		expect(strict('public', { ...p, materialComposition: bad }, absentPaths(p))).toBe(false);
	});
	it('the schemas themselves are valid draft-04 (checked against the meta-schema by ajv-draft-04)', () => {
		expect(ajv.validateSchema(passportSchema('full'))).toBe(true);
	});
});
