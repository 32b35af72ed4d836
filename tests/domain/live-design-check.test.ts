/**
 * The system form's design check in the browser: the same pure check the server runs, on the
 * figures the form was given. Expected values are worked by hand from the definitions: a
 * string's voltage is cells in series × cell voltage × modules in series; usable energy is the
 * module's usable energy × modules; continuous current is C-rate × rated Ah per string
 * (I = C × Ah, the usual definition of the C-rate, e.g. IEC 61434's I_t = C_n / 1 h).
 */
import { describe, expect, it } from 'vitest';
import { liveDesignCheck, type DesignModel } from '$lib/components/sites/live-design-check';

// An LFP module of 16 cells: 2.5 / 3.2 / 3.65 V per cell (common practice for LiFePO4).
const module = {
	cellsSeries: 16,
	cellMinV: 2.5,
	cellNominalV: 3.2,
	cellMaxV: 3.65,
	ratedAh: 100,
	usableWh: 5120,
	maxContinuousC: 0.5,
	burstC: 1
};
const models: DesignModel[] = [{ code: 'TC-HC-48', name: 'Home cell 48', module }];
const inverter = { minV: 40, maxV: 100 };

describe('liveDesignCheck', () => {
	it('nothing to check until the design is complete', () => {
		expect(liveDesignCheck(models, null)).toEqual({ result: null, issues: [], message: '' });
	});

	it('one module per string: 16 × 2.5 = 40 V to 16 × 3.65 = 58.4 V fits a 40–100 V window', () => {
		const { result } = liveDesignCheck(models, {
			model: 'TC-HC-48',
			series: 1,
			parallel: 2,
			inverter
		});
		expect(result!.stringVoltage.min).toBeCloseTo(40, 6);
		expect(result!.stringVoltage.max).toBeCloseTo(58.4, 6);
		expect(result!.fitsWindow).toBe(true);
		expect(result!.energyKWh).toBeCloseTo(10.24, 6); // 2 × 5120 Wh
		expect(result!.continuousCurrentA).toBeCloseTo(100, 6); // 2 strings × 0.5 C × 100 Ah
	});

	it('two in series: 2 × 58.4 = 116.8 V is above the 100 V maximum, and says so', () => {
		const { result } = liveDesignCheck(models, {
			model: 'TC-HC-48',
			series: 2,
			parallel: 1,
			inverter
		});
		expect(result!.stringVoltage.max).toBeCloseTo(116.8, 6);
		expect(result!.fitsWindow).toBe(false);
		expect(result!.problems.join(' ')).toMatch(/above the inverter's/);
	});

	it('an unreadable window or an unknown model is said in words, not thrown', () => {
		const bad = liveDesignCheck(models, {
			model: 'TC-HC-48',
			series: 1,
			parallel: 1,
			inverter: { minV: 100, maxV: 40 }
		});
		expect(bad.result).toBeNull();
		expect(bad.issues.length).toBeGreaterThan(0);
		expect(
			liveDesignCheck(models, { model: 'XX', series: 1, parallel: 1, inverter }).message
		).toMatch(/no module model XX/);
	});
});
