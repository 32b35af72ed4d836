import { describe, expect, it } from 'vitest';
import {
	chargeMinutesAtC,
	energyWh,
	insulationRequirement,
	minOvercurrentRatingA,
	prospectiveShortCircuitA,
	voltageDropV
} from '../../src/lib/domain/electrical';

describe('C-rate and energy (docs/references.md §2)', () => {
	it('10C takes about 6 minutes, 1C 60 minutes (I_t = C_n / 1 h, IEC 61434; common practice)', () => {
		expect(chargeMinutesAtC(10)).toBeCloseTo(6, 10);
		expect(chargeMinutesAtC(1)).toBe(60);
		expect(chargeMinutesAtC(0.5)).toBe(120);
	});

	it('rejects a C-rate of zero or below', () => {
		expect(() => chargeMinutesAtC(0)).toThrow(RangeError);
		expect(() => chargeMinutesAtC(-1)).toThrow(RangeError);
	});

	it('16 × 3.2 V × 280 Ah = 14 336 Wh (energy = V_nominal × Ah, calc)', () => {
		expect(energyWh(16 * 3.2, 280)).toBeCloseTo(14_336, 6);
	});
});

describe('Voltage drop (Cutnell & Johnson Table 20.1, docs/references.md §9)', () => {
	it('5 m one way, 100 A, 35 mm² copper → 0.4914 V', () => {
		const v = voltageDropV({ currentA: 100, oneWayLengthM: 5, areaMm2: 35 });
		// Recomputed here from V = I × 2L × ρ / A with ρ_Cu = 1.72e-8 Ω·m and A in m².
		expect(v).toBeCloseTo((100 * 2 * 5 * 1.72e-8) / 35e-6, 12);
		expect(v).toBeCloseTo(0.4914, 4);
	});

	it('uses a given resistivity instead of copper', () => {
		// Aluminium, 2.82e-8 Ω·m (Cutnell & Johnson Table 20.1).
		expect(
			voltageDropV({ currentA: 100, oneWayLengthM: 5, areaMm2: 35, resistivityOhmM: 2.82e-8 })
		).toBeCloseTo(0.8057, 4);
	});

	it('rejects a zero cross-section', () => {
		expect(() => voltageDropV({ currentA: 100, oneWayLengthM: 5, areaMm2: 0 })).toThrow(RangeError);
	});
});

describe('Insulation test voltage and minimum, IEC 60364-6:2016 Table 6.1 (docs/references.md §4)', () => {
	it('SELV / PELV: 250 V DC, 0.5 MΩ', () => {
		expect(insulationRequirement(48, { selvPelv: true })).toMatchObject({
			testVoltageV: 250,
			minMohm: 0.5,
			band: 'selv_pelv'
		});
	});

	it('the band follows the circuit type: a 48 V circuit not built as SELV/PELV is in the middle row', () => {
		expect(insulationRequirement(48)).toMatchObject({
			testVoltageV: 500,
			minMohm: 1.0,
			band: 'up_to_500v'
		});
	});

	it('500 V is in the middle row: 500 V DC, 1.0 MΩ', () => {
		expect(insulationRequirement(500)).toMatchObject({
			testVoltageV: 500,
			minMohm: 1.0,
			band: 'up_to_500v'
		});
	});

	it('501 V is in the last row: 1000 V DC, 1.0 MΩ', () => {
		expect(insulationRequirement(501)).toMatchObject({
			testVoltageV: 1000,
			minMohm: 1.0,
			band: 'above_500v'
		});
	});
});

describe('Protection rules (docs/references.md §9, from memory)', () => {
	it('overcurrent device ≥ 125 % of continuous current (NEC 210.20 / 706.30 style, from memory)', () => {
		// From memory: not yet read in the code text; kept as the product's default rule.
		expect(minOvercurrentRatingA(100)).toBe(125);
		expect(minOvercurrentRatingA(372)).toBeCloseTo(465, 10);
	});

	it('prospective short-circuit current ≈ U / R_internal (from memory)', () => {
		// 51.2 V over 2 mΩ: 25 600 A before any cable resistance.
		expect(prospectiveShortCircuitA(51.2, 0.002)).toBeCloseTo(25_600, 6);
	});
});
