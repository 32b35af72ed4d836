/**
 * Issue 12: fault current and protective devices, the insulation band by the highest
 * voltage, implausible readings, rule sets. Each check names its source beside it.
 */
import { describe, expect, it } from 'vitest';
import {
	bankShortCircuitA,
	insulationRequirement,
	judgeProtection,
	prospectiveShortCircuitA,
	SELV_DC_LIMIT_V
} from '../../src/lib/domain/electrical';
import {
	DEFAULT_RULE_SET,
	evaluateCommissioning,
	expectedStringV,
	implausibleReading,
	readingsTable,
	type CommissioningMeasurements,
	type CommissioningSystem
} from '../../src/lib/domain/commissioning';

describe('Prospective short-circuit current (REFERENCES §10; IEC 61660-1 source model, from memory)', () => {
	it('worked example: 2 strings of modules with 16.5 V maximum and 2.0 mΩ → 16,500 A', () => {
		// Recomputed by hand: I_k = P × U_max / R = 2 × 16.5 V / 0.002 Ω = 16 500 A.
		expect(
			bankShortCircuitA({
				parallel: 2,
				series: 1,
				moduleMaxV: 16.5,
				moduleInternalResistanceMOhm: 2
			})
		).toBeCloseTo(16_500, 6);
	});

	it('series count cancels: 4 × 16.5 V behind 4 × 2.0 mΩ per string gives the same 16,500 A', () => {
		expect(
			bankShortCircuitA({
				parallel: 2,
				series: 4,
				moduleMaxV: 16.5,
				moduleInternalResistanceMOhm: 2
			})
		).toBeCloseTo(16_500, 6);
	});

	it('one string is U / R (the single-source case): 16.5 V / 2.0 mΩ = 8,250 A', () => {
		expect(prospectiveShortCircuitA(16.5, 0.002)).toBeCloseTo(8_250, 6);
	});

	it('the demo 2 × 2 of 30.25 V / 3.0 mΩ modules: 2 × 30.25 / 0.003 = 20,166.7 A (the 16–19 kA class of the review)', () => {
		expect(
			bankShortCircuitA({
				parallel: 2,
				series: 2,
				moduleMaxV: 30.25,
				moduleInternalResistanceMOhm: 3
			})
		).toBeCloseTo(20_166.667, 2);
	});

	it('rejects a zero internal resistance instead of dividing by it', () => {
		expect(() =>
			bankShortCircuitA({
				parallel: 2,
				series: 1,
				moduleMaxV: 16.5,
				moduleInternalResistanceMOhm: 0
			})
		).toThrow(RangeError);
	});
});

describe('Protective device verdicts (NEC 210.20 / 706.30 style 125 %, IEC 60947-2 / 60269 DC ratings; from memory)', () => {
	const duty = { continuousA: 400, stringMaxV: 66, shortCircuitA: 16_500 };

	it('a 500 A / 80 V / 20 kA device fits 400 A continuous (≥ 500 A), 66 V, 16.5 kA', () => {
		const v = judgeProtection(
			{ ratedCurrentA: 500, ratedVoltageDcV: 80, breakingCapacityKA: 20 },
			duty
		);
		expect(v.fits).toBe(true);
		expect(v.problems).toEqual([]);
	});

	it('exact ties pass: 500 A for 125 % of 400 A, 66 V for 66 V, 16.5 kA for 16,500 A', () => {
		const v = judgeProtection(
			{ ratedCurrentA: 500, ratedVoltageDcV: 66, breakingCapacityKA: 16.5 },
			duty
		);
		expect(v.fits).toBe(true);
	});

	it('refuses 10 kA against 16,500 A with both numbers', () => {
		const v = judgeProtection(
			{ ratedCurrentA: 500, ratedVoltageDcV: 80, breakingCapacityKA: 10 },
			duty
		);
		expect(v.fits).toBe(false);
		expect(v.problems).toHaveLength(1);
		expect(v.problems[0]).toContain('breaking capacity 10 kA, below the 16.5 kA (16,500 A)');
	});

	it('refuses 499.9 A (just under 125 % of 400 A = 500 A) and 65.9 V (just under 66 V), each with numbers', () => {
		const v = judgeProtection(
			{ ratedCurrentA: 499.9, ratedVoltageDcV: 65.9, breakingCapacityKA: 20 },
			duty
		);
		expect(v.fits).toBe(false);
		expect(v.problems).toEqual([
			'Protective device rated 499.9 A, below 500 A (125 % of 400 A continuous): choose a device rated 500 A or more.',
			'Protective device DC voltage rating 65.9 V, below the 66 V string maximum: choose a device rated for at least 66 V DC.'
		]);
	});

	it('without the internal resistance the breaking capacity cannot be shown to suffice', () => {
		const v = judgeProtection(
			{ ratedCurrentA: 500, ratedVoltageDcV: 80, breakingCapacityKA: 100 },
			{ ...duty, shortCircuitA: null }
		);
		expect(v.fits).toBe(false);
		expect(v.problems[0]).toContain('internal resistance is not on record');
	});
});

describe('Insulation test band by the highest voltage, IEC 60364-6:2016 Table 6.1 (REFERENCES §4, §11)', () => {
	it('465 V nominal / 545 V maximum gets the above-500 V row: 1000 V, 1.0 MΩ', () => {
		expect(insulationRequirement(545)).toMatchObject({
			testVoltageV: 1000,
			minMohm: 1.0,
			band: 'above_500v'
		});
	});

	it('boundary 500 V: exactly 500 V is in the middle row, 500.01 V in the last', () => {
		expect(insulationRequirement(500).testVoltageV).toBe(500);
		expect(insulationRequirement(500.01).testVoltageV).toBe(1000);
	});

	it('boundary 120 V DC for SELV/PELV (IEC 60364-4-41 §414, from memory): 120 V accepted, 120.01 V refused', () => {
		expect(SELV_DC_LIMIT_V).toBe(120);
		expect(insulationRequirement(120, { selvPelv: true })).toMatchObject({
			testVoltageV: 250,
			minMohm: 0.5,
			band: 'selv_pelv'
		});
		const above = insulationRequirement(120.01, { selvPelv: true });
		expect(above).toMatchObject({ testVoltageV: 500, minMohm: 1.0, band: 'up_to_500v' });
		expect(above.selvRefused).toContain('above the 120 V limit of SELV/PELV');
	});

	it('the checklist picks the band from the string maximum, not the nominal voltage', () => {
		// 9 modules × 22 cells: nominal 198 × 2.35 = 465.3 V, maximum 198 × 2.75 = 544.5 V.
		const sys: CommissioningSystem = {
			series: 9,
			parallel: 1,
			model: {
				cellsSeries: 22,
				cellMinV: 1.8,
				cellNominalV: 2.35,
				cellMaxV: 2.75,
				ratedAh: 46.5,
				maxContinuousC: 3,
				chargeTempMinC: -30,
				chargeTempMaxC: 55,
				dischargeTempMinC: -40,
				dischargeTempMaxC: 60
			}
		};
		const r = evaluateCommissioning(sys, { insulation: { testVoltageV: 500, measuredMohm: 200 } });
		expect(r.insulation.testVoltageV).toBe(1000);
		const i = r.items.find((x) => x.key === 'insulation')!;
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('below the 1000 V DC test voltage');
		expect(i.reason).toContain('reaching 544.5 V');
	});
});

// TC-HC-48-like: 22 cells, 39.6–60.5 V per module, 51.7 V nominal; 6.0 mΩ; two strings of one module.
const model48 = {
	cellsSeries: 22,
	cellMinV: 1.8,
	cellNominalV: 2.35,
	cellMaxV: 2.75,
	ratedAh: 46.5,
	maxContinuousC: 3,
	chargeTempMinC: -30,
	chargeTempMaxC: 55,
	dischargeTempMinC: -40,
	dischargeTempMaxC: 60,
	internalResistanceMOhm: 6
};
const twoStrings: CommissioningSystem = { series: 1, parallel: 2, model: model48 };

describe('Readings that catch typos (implausible, common practice margins 1.2 × max, 0.5 × min)', () => {
	it('5165 typed for 51.65 V: about 100 times the expected value, check the decimal point', () => {
		const m: CommissioningMeasurements = {
			moduleOcvV: [[51.65], [51.66]],
			stringVoltageV: [5165, 51.66]
		};
		const r = evaluateCommissioning(twoStrings, m);
		const i = r.items.find((x) => x.key === 'string_voltage')!;
		expect(i.status).toBe('implausible');
		expect(i.reason).toContain('String 1 voltage: 5,165 V is about 100 times the 51.65 V expected');
		expect(i.reason).toContain('check the decimal point');
		expect(i.reason).not.toContain('not recorded');
		expect(r.implausible).toHaveLength(1);
		expect(r.overall).toBe('fail');
	});

	it('5.165 for 51.65 V: about 1/10 of the expected value', () => {
		const why = implausibleReading('Module', 5.165, 51.65, 39.6, 60.5, DEFAULT_RULE_SET.limits);
		expect(why).toContain('5.165 V is about 1/10 of the 51.65 V expected');
	});

	it('edges: 1.2 × 60.5 V = 72.6 V is still plausible (then fails as out of range), 72.61 V is implausible', () => {
		const L = DEFAULT_RULE_SET.limits;
		expect(implausibleReading('x', 72.6, 51.7, 39.6, 60.5, L)).toBeNull();
		expect(implausibleReading('x', 72.61, 51.7, 39.6, 60.5, L)).not.toBeNull();
		// 0.5 × 39.6 V = 19.8 V is the lower edge.
		expect(implausibleReading('x', 19.8, 51.7, 39.6, 60.5, L)).toBeNull();
		expect(implausibleReading('x', 19.79, 51.7, 39.6, 60.5, L)).not.toBeNull();
	});

	it('a module reading of 516.5 V is implausible at the module item', () => {
		const r = evaluateCommissioning(twoStrings, { moduleOcvV: [[516.5], [51.6]] });
		const i = r.items.find((x) => x.key === 'module_ocv_spread')!;
		expect(i.status).toBe('implausible');
		expect(i.reason).toContain('516.5 V is about 10 times the 51.7 V expected');
	});

	it('expected string voltage: the sum of its module readings, else the nominal voltage', () => {
		expect(expectedStringV(2, model48, [51.2, 51.25])).toEqual({
			expectedV: 102.45,
			basis: 'modules'
		});
		expect(expectedStringV(1, model48, [51.65])).toEqual({ expectedV: 51.65, basis: 'modules' });
		// 2 × 22 × 2.35 V = 103.4 V.
		expect(expectedStringV(2, model48, [51.2, null])).toEqual({
			expectedV: 103.4,
			basis: 'nominal'
		});
	});
});

describe('Breaking capacity and per-string devices in the checklist (REFERENCES §10)', () => {
	// 2 × 60.5 V / 6.0 mΩ = 20 166.7 A → rounded 20 167 A.
	const base: CommissioningMeasurements = {
		protectiveDevice: { ratingA: 400, dcVoltageRatingV: 80, breakingCapacityKA: 10 }
	};

	it('a 10 kA device is refused against the 20,167 A the two strings can deliver', () => {
		const r = evaluateCommissioning(twoStrings, base);
		expect(r.shortCircuitA).toBe(20_167);
		const i = r.items.find((x) => x.key === 'protective_device')!;
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('breaking capacity 10 kA, below the 20.2 kA (20,167 A)');
	});

	it('a 25 kA device passes; its reason repeats all three numbers', () => {
		const r = evaluateCommissioning(twoStrings, {
			protectiveDevice: { ratingA: 400, dcVoltageRatingV: 80, breakingCapacityKA: 25 }
		});
		const i = r.items.find((x) => x.key === 'protective_device')!;
		// 125 % of 2 × 3C × 46.5 Ah = 348.75 A.
		expect(i.status).toBe('pass');
		expect(i.reason).toContain('at least 348.8 A');
		expect(i.reason).toContain('at or above the 20.2 kA');
	});

	it('asks for a device per string and says why: a faulted string is fed by the others (common practice)', () => {
		const ask = evaluateCommissioning(twoStrings, {}).items.find(
			(x) => x.key === 'string_protection'
		)!;
		expect(ask.status).toBe('not_measured');
		expect(ask.reason).toContain('fed by the other 1 string, up to 10,084 A');
		const no = evaluateCommissioning(twoStrings, { stringProtection: false }).items.find(
			(x) => x.key === 'string_protection'
		)!;
		expect(no.status).toBe('fail');
	});
});

describe('Rule sets: limits and citations come from the set', () => {
	it('the default set cites "common practice" where no standard was read', () => {
		expect(DEFAULT_RULE_SET.citations.moduleVoltages).toBe('common practice');
		expect(DEFAULT_RULE_SET.citations.stringProtection).toBe('common practice');
		expect(DEFAULT_RULE_SET.citations.overcurrent).toContain('from memory');
	});

	it('a market set with its own factor and citation judges by them', () => {
		const rules = {
			limits: { ...DEFAULT_RULE_SET.limits, overcurrentFactor: 1.5 },
			citations: { ...DEFAULT_RULE_SET.citations, overcurrent: 'Coast wiring rules cl. 7.2' }
		};
		const r = evaluateCommissioning(
			twoStrings,
			{ protectiveDevice: { ratingA: 400, dcVoltageRatingV: 80, breakingCapacityKA: 25 } },
			rules
		);
		const i = r.items.find((x) => x.key === 'protective_device')!;
		// 150 % of 279 A = 418.5 A > 400 A.
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('below 418.5 A (150 % of 279 A continuous)');
		expect(i.reason).toContain('Coast wiring rules cl. 7.2');
	});

	it('the readings table lists every reading with its limit', () => {
		const rows = readingsTable(twoStrings, {
			moduleOcvV: [[51.2], [51.22]],
			stringVoltageV: [51.2, 51.22],
			insulation: { testVoltageV: 500, measuredMohm: 150 },
			protectiveDevice: { ratingA: 400, dcVoltageRatingV: 80, breakingCapacityKA: 25 },
			ambientC: 16
		});
		expect(rows.map((r) => r.what)).toEqual([
			'String 1, position 1',
			'String 2, position 1',
			'String 1',
			'String 2',
			'Largest difference (from string voltages)',
			'Test voltage',
			'Insulation resistance',
			'Current rating',
			'DC voltage rating',
			'Breaking capacity',
			'Temperature at the battery'
		]);
		expect(rows.find((r) => r.what === 'Breaking capacity')).toMatchObject({
			value: '25.0 kA',
			limit: 'at least 20.2 kA (20,167 A)'
		});
		expect(rows.find((r) => r.what.startsWith('Largest'))).toMatchObject({
			value: '0.02 V',
			limit: 'at most 0.05 V'
		});
	});
});

describe('checkDesign answers the fault current and judges the planned device (API contract of POST /api/design-check)', () => {
	const HC24 = {
		cellsSeries: 11,
		cellMinV: 1.8,
		cellNominalV: 2.35,
		cellMaxV: 2.75,
		ratedAh: 93,
		usableWh: 2300,
		maxContinuousC: 3,
		burstC: 8,
		internalResistanceMOhm: 3.2
	};
	const inverter = { minV: 36, maxV: 64 };

	it('2 × 2 TC-HC-24 with 3.2 mΩ: 2 × 30.25 V / 3.2 mΩ = 18,906 A; a 500 A / 80 V / 10 kA device is refused', async () => {
		const { checkDesign } = await import('../../src/lib/domain/design-check');
		const r = checkDesign({
			module: HC24,
			series: 2,
			parallel: 2,
			inverter,
			protection: { ratedCurrentA: 700, ratedVoltageDcV: 80, breakingCapacityKA: 10 }
		});
		// 2 × 30.25 / 0.0032 = 18 906.25 → 18 906 A.
		expect(r.shortCircuitCurrentA).toBe(18_906);
		expect(r.protection?.fits).toBe(false);
		expect(r.protection?.problems).toEqual([
			'Protective device breaking capacity 10 kA, below the 18.9 kA (18,906 A) the bank can deliver into a short circuit: the device could fail to break the fault; choose one rated to break at least 18.9 kA DC.'
		]);
		expect(r.stringProtectionNote).toContain('fed by the other 1 string');
		// Existing fields stay as they were.
		expect(r.fitsWindow).toBe(true);
		expect(r.continuousCurrentA).toBe(558);
	});

	it('without the internal resistance the fault current is null; without a device, protection is null', async () => {
		const { checkDesign } = await import('../../src/lib/domain/design-check');
		const { internalResistanceMOhm: _r, ...noR } = HC24;
		const r = checkDesign({ module: noR, series: 2, parallel: 1, inverter });
		expect(r.shortCircuitCurrentA).toBeNull();
		expect(r.protection).toBeNull();
		expect(r.stringProtectionNote).toBeNull();
	});
});
