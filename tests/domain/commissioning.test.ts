import { describe, expect, it } from 'vitest';
import {
	blankPreview,
	evaluateCommissioning,
	operatingTempRange,
	type CommissioningLimits,
	type CommissioningMeasurements,
	type CommissioningSystem
} from '../../src/lib/domain/commissioning';

// Invented TC-HC-24 (11 cells, 93 Ah) with invented temperature ranges; 2 in series × 2 strings.
const model = {
	cellsSeries: 11,
	cellMinV: 1.8,
	cellNominalV: 2.35,
	cellMaxV: 2.75,
	ratedAh: 93,
	maxContinuousC: 2,
	chargeTempMinC: -10,
	chargeTempMaxC: 45,
	dischargeTempMinC: -30,
	dischargeTempMaxC: 55,
	internalResistanceMOhm: 3.0
};
const system: CommissioningSystem = { series: 2, parallel: 2, model };

// String max 22 × 2.75 = 60.5 V; continuous 2 × 2C × 93 Ah = 372 A → device ≥ 465 A (125 %, from memory);
// fault current 2 strings × 30.25 V / 3.0 mΩ = 20 166.7 A (IEC 61660-1 source model, from memory).
const good: CommissioningMeasurements = {
	moduleOcvV: [
		[25.41, 25.43],
		[25.4, 25.42]
	],
	stringVoltageV: [50.84, 50.82],
	insulation: { testVoltageV: 500, measuredMohm: 50 },
	polarityChecked: true,
	torqueConfirmed: true,
	protectiveDevice: { ratingA: 500, dcVoltageRatingV: 80, breakingCapacityKA: 25 },
	stringProtection: true,
	ambientC: 20,
	stopChargeProven: true
};

const item = (
	m: CommissioningMeasurements,
	key: string,
	sys = system,
	t: { limits?: Partial<CommissioningLimits> } = {}
) => evaluateCommissioning(sys, m, t).items.find((i) => i.key === key)!;

describe('evaluateCommissioning: overall', () => {
	it('passes when every item passes', () => {
		const r = evaluateCommissioning(system, good);
		expect(r.items.map((i) => [i.key, i.status])).toEqual([
			['module_ocv_spread', 'pass'],
			['string_voltage', 'pass'],
			['inter_string_difference', 'pass'],
			['insulation', 'pass'],
			['polarity', 'pass'],
			['torque', 'pass'],
			['protective_device', 'pass'],
			['string_protection', 'pass'],
			['ambient_temperature', 'pass'],
			['stop_charge', 'pass']
		]);
		expect(r.overall).toBe('pass');
	});

	it('is incomplete when nothing fails but something is not measured', () => {
		const r = evaluateCommissioning(system, { ...good, stopChargeProven: null });
		expect(item({ ...good, stopChargeProven: null }, 'stop_charge').status).toBe('not_measured');
		expect(r.overall).toBe('incomplete');
	});

	it('is incomplete with no measurements at all', () => {
		const r = evaluateCommissioning(system, {});
		expect(r.items.every((i) => i.status === 'not_measured')).toBe(true);
		expect(r.implausible).toEqual([]);
		expect(r.overall).toBe('incomplete');
	});

	it('fails when any item fails, even with others missing', () => {
		const r = evaluateCommissioning(system, { polarityChecked: false });
		expect(r.overall).toBe('fail');
	});
});

describe('Insulation against IEC 60364-6:2016 Table 6.1', () => {
	it('0.4 MΩ at 500 V fails the 1.0 MΩ minimum of a ≤ 500 V circuit', () => {
		const i = item({ ...good, insulation: { testVoltageV: 500, measuredMohm: 0.4 } }, 'insulation');
		expect(i.status).toBe('fail');
		expect(i.reason).toContain(
			'Insulation 0.4 MΩ at 500 V is below the 1.0 MΩ minimum of IEC 60364-6:2016 Table 6.1'
		);
	});

	it('a test at 250 V is too low for a 60.5 V circuit not built as SELV/PELV (needs 500 V)', () => {
		const i = item({ ...good, insulation: { testVoltageV: 250, measuredMohm: 50 } }, 'insulation');
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('tested at 250 V, below the 500 V DC test voltage');
	});

	it('SELV/PELV: 0.6 MΩ at 250 V meets the 0.5 MΩ minimum', () => {
		const i = item(
			{ ...good, insulation: { testVoltageV: 250, measuredMohm: 0.6 } },
			'insulation',
			{ ...system, selvPelv: true }
		);
		expect(i.status).toBe('pass');
		expect(i.reason).toContain('0.5 MΩ');
	});

	it('a circuit reaching 600 V needs a 1000 V test (above 500 V row)', () => {
		const i = item({ ...good, insulation: { testVoltageV: 500, measuredMohm: 50 } }, 'insulation', {
			...system,
			circuitMaxV: 600
		});
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('1000 V');
	});

	it('not measured says what is required', () => {
		const i = item({ ...good, insulation: null }, 'insulation');
		expect(i.status).toBe('not_measured');
		expect(i.reason).toContain('1.0 MΩ at 500 V DC');
	});
});

describe('Module OCV spread (50 mV default, common practice)', () => {
	it('fails a 60 mV spread', () => {
		const i = item(
			{
				...good,
				moduleOcvV: [
					[25.4, 25.46],
					[25.41, 25.42]
				]
			},
			'module_ocv_spread'
		);
		expect(i.status).toBe('fail');
		expect(i.reason).toContain(
			'a spread of 60 mV, above the 50 mV limit between any two modules (common practice)'
		);
	});

	it('the limit is a parameter', () => {
		const m = {
			...good,
			moduleOcvV: [
				[25.4, 25.46],
				[25.41, 25.42]
			]
		};
		expect(
			item(m, 'module_ocv_spread', system, { limits: { moduleOcvToleranceV: 0.1 } }).status
		).toBe('pass');
	});

	it('a partial set is not measured, unless what was measured already fails', () => {
		expect(
			item(
				{
					...good,
					moduleOcvV: [
						[25.4, null],
						[25.41, 25.42]
					]
				},
				'module_ocv_spread'
			).status
		).toBe('not_measured');
		expect(
			item(
				{
					...good,
					moduleOcvV: [
						[25.4, null],
						[25.41, 25.6]
					]
				},
				'module_ocv_spread'
			).status
		).toBe('fail');
	});

	it('a grid that does not match the system shape is not measured, with the reason', () => {
		const i = item({ ...good, moduleOcvV: [[25.4, 25.41, 25.42]] }, 'module_ocv_spread');
		expect(i.status).toBe('not_measured');
		expect(i.reason).toContain('system has 2 strings of 2');
	});
});

describe('String voltage against the sum of its modules (1 % or 0.5 V, common practice)', () => {
	it('fails 51.50 V against 50.84 V summed (0.66 V apart, 0.51 V allowed)', () => {
		const i = item({ ...good, stringVoltageV: [51.5, 50.82] }, 'string_voltage');
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('String 1 reads 51.5 V against 50.84 V summed from its modules');
	});

	it('fails a reading outside the string range 39.6–60.5 V', () => {
		const i = item({ ...good, stringVoltageV: [25.4, 50.82] }, 'string_voltage');
		expect(i.status).toBe('fail');
		expect(i.reason).toContain("outside the model's 39.6 V to 60.5 V");
	});

	it('a missing string reading is not measured', () => {
		expect(item({ ...good, stringVoltageV: [50.84, null] }, 'string_voltage').status).toBe(
			'not_measured'
		);
	});
});

describe('Difference between parallel strings: series × 50 mV, the module rule (common practice)', () => {
	it('derives 1.1 V from the string voltages and fails it against 2 × 50 mV = 0.1 V', () => {
		const m = { ...good, moduleOcvV: null, stringVoltageV: [50.8, 51.9] };
		const i = item(m, 'inter_string_difference');
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('Strings differ by 1.1 V (from the string voltages)');
		expect(i.reason).toContain('0.1 V limit before paralleling: 2 modules per string × 50 mV');
	});

	it('uses a measured difference when given: 0.08 V passes, 0.3 V fails, 0.1 V (a tie) passes', () => {
		const ok = item({ ...good, interStringDiffV: 0.08 }, 'inter_string_difference');
		expect(ok.status).toBe('pass');
		expect(ok.reason).toContain('0.08 V (measured)');
		expect(item({ ...good, interStringDiffV: 0.3 }, 'inter_string_difference').status).toBe('fail');
		expect(item({ ...good, interStringDiffV: 0.1 }, 'inter_string_difference').status).toBe('pass');
	});

	it('one-module strings: the string limit equals the module limit (no contradiction)', () => {
		const one = { ...system, series: 1 };
		const r = evaluateCommissioning(one, {});
		expect(r.interStringLimitV).toBe(0.05);
		// 20 modules per string give the 1.0 V the old separate rule used.
		expect(evaluateCommissioning({ ...system, series: 20 }, {}).interStringLimitV).toBe(1);
	});

	it('a single string has nothing to join', () => {
		const one = { ...system, parallel: 1 };
		expect(item({}, 'inter_string_difference', one).status).toBe('pass');
	});
});

describe('Protective device (≥ 125 % continuous, from memory; DC rating ≥ string maximum)', () => {
	it('fails 400 A against 465 A = 125 % of 372 A', () => {
		const i = item(
			{ ...good, protectiveDevice: { ratingA: 400, dcVoltageRatingV: 80, breakingCapacityKA: 25 } },
			'protective_device'
		);
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('rated 400 A, below 465 A (125 % of 372 A continuous)');
	});

	it('fails a 48 V DC rating against the 60.5 V string maximum', () => {
		const i = item(
			{ ...good, protectiveDevice: { ratingA: 500, dcVoltageRatingV: 48, breakingCapacityKA: 25 } },
			'protective_device'
		);
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('DC voltage rating 48 V, below the 60.5 V string maximum');
	});

	it('uses the system current limit when given: 100 A → 125 A', () => {
		const i = item(
			{ ...good, protectiveDevice: { ratingA: 125, dcVoltageRatingV: 80, breakingCapacityKA: 25 } },
			'protective_device',
			{
				...system,
				maxContinuousA: 100
			}
		);
		expect(i.status).toBe('pass');
	});
});

describe('Ambient temperature: overlap of the charge and discharge ranges', () => {
	it('the overlap of −10…45 °C charge and −30…55 °C discharge is −10…45 °C', () => {
		expect(operatingTempRange(model)).toEqual({ minC: -10, maxC: 45 });
	});

	it('−15 °C is within discharge but not charge, so it fails and says which range', () => {
		const i = item({ ...good, ambientC: -15 }, 'ambient_temperature');
		expect(i.status).toBe('fail');
		expect(i.reason).toContain('outside -10 to 45 °C, the overlap of the model');
	});
});

describe('blankPreview: the checklist before anything is measured', () => {
	it('is the evaluation of no readings, with the nominal string voltage and the ambient overlap', () => {
		const p = blankPreview(system);
		expect(p.result).toEqual(evaluateCommissioning(system, {}));
		expect(p.result.overall).toBe('incomplete');
		// Nominal string voltage: 2 modules × 11 cells × 2.35 V = 51.7 V (the model's figures above).
		expect(p.nominalStringV).toBeCloseTo(51.7, 9);
		// The overlap of charge (−10 to 45 °C) and discharge (−30 to 55 °C): −10 to 45 °C.
		expect(p.ambient).toEqual({ minC: -10, maxC: 45 });
	});

	it('judges by the rule set given, like the evaluation', () => {
		const rules = { limits: { moduleOcvToleranceV: 0.1 } };
		const p = blankPreview(system, rules);
		expect(p.result).toEqual(evaluateCommissioning(system, {}, rules));
		expect(p.result.interStringLimitV).not.toBe(blankPreview(system).result.interStringLimitV);
	});
});
