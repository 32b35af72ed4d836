import { describe, expect, it } from 'vitest';
import {
	checkDesign,
	type DesignModule,
	type DesignVariant,
	type InverterWindow
} from '../../src/lib/domain/design-check';
import { designCheckInputSchema } from '../../src/lib/schemas/design-check';

// Invented TC-HC range (demo data): ~2.35 V titanate-type cells, about 2.3 kWh usable each.
const cell = {
	cellMinV: 1.8,
	cellNominalV: 2.35,
	cellMaxV: 2.75,
	usableWh: 2300,
	maxContinuousC: 2,
	burstC: 4
};
const HC12: DesignModule = { ...cell, cellsSeries: 6, ratedAh: 170 };
const HC24: DesignModule = { ...cell, cellsSeries: 11, ratedAh: 93 };
const HC48: DesignModule = { ...cell, cellsSeries: 22, ratedAh: 46.5 };
const variants: DesignVariant[] = [
	{ code: 'TC-HC-12', module: HC12 },
	{ code: 'TC-HC-24', module: HC24 },
	{ code: 'TC-HC-48', module: HC48 }
];
// An invented "48 V" off-grid inverter.
const inverter48: InverterWindow = {
	minV: 36,
	maxV: 64,
	preferredMinV: 39,
	preferredMaxV: 62,
	maxChargeA: 100,
	maxDischargeA: 120
};

describe('checkDesign: string voltage, energy, current, power', () => {
	it('flags an overshooting string: 4 × TC-HC-12 = 24 cells × 2.75 V = 66.0 V above a 64 V maximum', () => {
		const r = checkDesign({ module: HC12, series: 4, parallel: 2, inverter: inverter48 });
		// 24 cells × 1.8 / 2.35 / 2.75 V.
		expect(r.stringVoltage).toEqual({ min: 43.2, nominal: 56.4, max: 66 });
		// Usable basis: 2300 Wh × 4 × 2.
		expect(r.energyKWh).toBeCloseTo(18.4, 9);
		// I = n × C_n per string (IEC 61434 I_t multiples) × 2 strings.
		expect(r.continuousCurrentA).toBe(680);
		expect(r.burstCurrentA).toBe(1360);
		expect(r.continuousPowerKW).toBeCloseTo((56.4 * 680) / 1000, 3);
		expect(r.burstPowerKW).toBeCloseTo((56.4 * 1360) / 1000, 3);
		expect(r.fitsWindow).toBe(false);
		expect(r.fitsPreferred).toBe(false);
		expect(r.problems).toHaveLength(1);
		expect(r.problems[0]).toContain(
			"String maximum 66.0 V is above the inverter's 64.0 V DC maximum: remove a module per string or choose a lower-voltage variant"
		);
	});

	it('passes the corrected design: 2 × TC-HC-24 = 22 cells, 39.6–60.5 V inside 36–64 V and the preferred 39–62 V', () => {
		const r = checkDesign({ module: HC24, series: 2, parallel: 2, inverter: inverter48 });
		expect(r.stringVoltage).toEqual({ min: 39.6, nominal: 51.7, max: 60.5 });
		expect(r.energyKWh).toBeCloseTo(9.2, 9);
		expect(r.continuousCurrentA).toBe(372);
		expect(r.continuousPowerKW).toBeCloseTo((51.7 * 372) / 1000, 3); // reported to the watt
		expect(r.fitsWindow).toBe(true);
		expect(r.fitsPreferred).toBe(true);
		expect(r.problems).toEqual([]);
	});

	it('flags an undershooting string: 3 × TC-HC-12 = 18 cells × 1.8 V = 32.4 V below 36 V', () => {
		const r = checkDesign({ module: HC12, series: 3, parallel: 1, inverter: inverter48 });
		expect(r.fitsWindow).toBe(false);
		expect(r.problems[0]).toContain(
			"String minimum 32.4 V is below the inverter's 36.0 V DC minimum"
		);
	});

	it('fitsPreferred equals fitsWindow when the inverter names no preferred range', () => {
		const { preferredMinV: _a, preferredMaxV: _b, ...plain } = inverter48;
		const r = checkDesign({ module: HC48, series: 1, parallel: 3, inverter: plain });
		expect(r.fitsWindow).toBe(true);
		expect(r.fitsPreferred).toBe(true);
	});

	it('fits the window but not a preferred 40–62 V range: 39.6 V minimum', () => {
		const r = checkDesign({
			module: HC48,
			series: 1,
			parallel: 3,
			inverter: { ...inverter48, preferredMinV: 40 }
		});
		expect(r.fitsWindow).toBe(true);
		expect(r.fitsPreferred).toBe(false);
		expect(r.problems.join(' ')).toContain('not its preferred 40.0 V to 62.0 V');
	});

	it('flags battery current below the inverter charge and discharge currents: 1 × 2C × 46.5 Ah = 93 A', () => {
		const r = checkDesign({ module: HC48, series: 1, parallel: 1, inverter: inverter48 });
		expect(r.continuousCurrentA).toBe(93);
		expect(r.problems).toHaveLength(2);
		expect(r.problems[0]).toContain(
			"Battery continuous current 93.0 A (1 × 2C × 46.5 Ah) is below the inverter's 120.0 A maximum discharge current"
		);
		expect(r.problems[1]).toContain("below the inverter's 100.0 A maximum charge current");
	});

	it('cautions above 8 parallel strings (common practice, not a standard)', () => {
		const r = checkDesign({ module: HC48, series: 1, parallel: 9, inverter: inverter48 });
		expect(r.problems.join(' ')).toMatch(/9 parallel strings exceed 8.*common practice/);
		const ok = checkDesign({ module: HC48, series: 1, parallel: 8, inverter: inverter48 });
		expect(ok.problems).toEqual([]);
	});

	it('says when the usable energy falls short of the target', () => {
		const r = checkDesign({
			module: HC48,
			series: 1,
			parallel: 2,
			inverter: inverter48,
			targetEnergyKWh: 9
		});
		expect(r.problems.join(' ')).toContain('Usable energy 4.6 kWh is below the 9.0 kWh target');
	});
});

describe('checkDesign: suggestions fit a target', () => {
	it('48 V inverter, 9 kWh: only 22-cell strings fit 36–64 V, each with 4 modules = 9.2 kWh', () => {
		const r = checkDesign({
			module: HC12,
			series: 4,
			parallel: 2,
			inverter: inverter48,
			targetEnergyKWh: 9,
			variants
		});
		expect(r.suggestions).toMatchObject([
			{
				code: 'TC-HC-24',
				series: 2,
				parallel: 2,
				energyKWh: 9.2,
				stringVoltage: { min: 39.6, nominal: 51.7, max: 60.5 },
				fitsPreferred: true,
				nominalInPreferred: true
			},
			{
				code: 'TC-HC-48',
				series: 1,
				parallel: 4,
				energyKWh: 9.2,
				stringVoltage: { min: 39.6, nominal: 51.7, max: 60.5 },
				fitsPreferred: true,
				nominalInPreferred: true
			}
		]);
		// Worked by hand: preferred 39–62 V has its middle at 50.5 V and half-width 11.5 V, so
		// 51.7 V sits 1.2 / 11.5 = 10 % of the way to its edge; 9.2 − 9.0 = 0.20 kWh surplus.
		expect(r.suggestions[0].reason).toBe(
			'nominal 51.7 V inside the preferred 39.0 V to 62.0 V, 10 % of the way from its middle to its edge; ' +
				'9.2 kWh, 0.20 kWh above the 9.0 kWh target; 4 modules.'
		);
		expect(r.suggestionRanking).toContain(
			'nominal string voltage inside the preferred window first'
		);
	});

	it('high-voltage inverter 120–450 V (preferred 200–420 V), 40 kWh: nominal in the preferred window, then least surplus, then centred', () => {
		const hv: InverterWindow = { minV: 120, maxV: 450, preferredMinV: 200, preferredMaxV: 420 };
		const r = checkDesign({
			module: HC48,
			series: 6,
			parallel: 3,
			inverter: hv,
			targetEnergyKWh: 40,
			variants
		});
		// Worked by hand (preferred middle 310 V, half-width 110 V): three designs reach 41.4 kWh
		// (1.4 kWh surplus) with the nominal voltage inside 200–420 V: 6 × TC-HC-48 × 3 (nominal
		// 310.2 V, 0.2 % off centre), 18 × TC-HC-12 (253.8 V, 51 %), 9 × TC-HC-24 × 2 (232.65 V,
		// 70 %); the last two span 194.4 / 178.2 V at their minimum, so their whole range misses the
		// preferred window (fitsPreferred stays false). Then 19 × TC-HC-12 = 43.7 kWh, then at
		// 46.0 kWh 20 × TC-HC-12 (282 V, 25 % off centre) before 10 × TC-HC-24 × 2 and 5 × TC-HC-48 × 4.
		expect(
			r.suggestions.map((s) => [s.code, s.series, s.parallel, s.energyKWh, s.fitsPreferred])
		).toEqual([
			['TC-HC-48', 6, 3, 41.4, true],
			['TC-HC-12', 18, 1, 41.4, false],
			['TC-HC-24', 9, 2, 41.4, false],
			['TC-HC-12', 19, 1, 43.7, true],
			['TC-HC-12', 20, 1, 46, true]
		]);
		expect(r.suggestions[1].reason).toContain(
			'nominal 253.8 V inside the preferred 200.0 V to 420.0 V, 51 %'
		);
		for (const s of r.suggestions) {
			expect(s.energyKWh).toBeGreaterThanOrEqual(40);
			expect(s.stringVoltage.min).toBeGreaterThanOrEqual(hv.minV);
			expect(s.stringVoltage.max).toBeLessThanOrEqual(hv.maxV);
		}
		expect(r.problems).toEqual([]);
	});

	it('returns no suggestions when no variant fits the window', () => {
		const r = checkDesign({
			module: HC12,
			series: 1,
			parallel: 1,
			inverter: { minV: 20, maxV: 21 },
			variants
		});
		expect(r.suggestions).toEqual([]);
	});

	it('is plain JSON', () => {
		const r = checkDesign({
			module: HC24,
			series: 2,
			parallel: 2,
			inverter: inverter48,
			targetEnergyKWh: 9,
			variants
		});
		expect(JSON.parse(JSON.stringify(r))).toEqual(r);
	});
});

describe('designCheckInputSchema', () => {
	const valid = {
		module: HC24,
		series: 2,
		parallel: 2,
		inverter: inverter48,
		targetEnergyKWh: 9,
		variants
	};
	const paths = (input: unknown) => {
		const r = designCheckInputSchema.safeParse(input);
		return r.success ? [] : r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
	};

	it('accepts a valid input', () => {
		expect(designCheckInputSchema.safeParse(valid).success).toBe(true);
	});

	it('names series and parallel outside whole numbers 1..64', () => {
		expect(paths({ ...valid, series: 0, parallel: 1.5 })).toEqual([
			'series: Modules in series must be at least 1',
			'parallel: Strings in parallel must be a whole number'
		]);
		expect(paths({ ...valid, parallel: 65 })).toEqual([
			'parallel: Strings in parallel must be at most 64'
		]);
	});

	it('names an inverter window with minimum above maximum, and a preferred range outside the window', () => {
		expect(paths({ ...valid, inverter: { minV: 64, maxV: 36 } })).toContain(
			'inverter.minV: Inverter DC minimum must be below its maximum'
		);
		expect(paths({ ...valid, inverter: { ...inverter48, preferredMaxV: 70 } })).toEqual([
			'inverter.preferredMaxV: Preferred maximum must lie within the inverter DC window'
		]);
	});

	it('names cell voltages out of order and non-positive figures', () => {
		expect(paths({ ...valid, module: { ...HC24, cellMinV: 2.4 } })).toEqual([
			'module.cellMinV: Cell minimum voltage must be below the nominal voltage'
		]);
		expect(paths({ ...valid, module: { ...HC24, ratedAh: -1 } })).toEqual([
			'module.ratedAh: Rated capacity must be above zero'
		]);
		expect(paths({ ...valid, targetEnergyKWh: 0 })).toEqual([
			'targetEnergyKWh: Target energy must be above zero'
		]);
	});
});
