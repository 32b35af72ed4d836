import { describe, expect, it } from 'vitest';
import { individualsChart, runRuleSignals, D2_N2, D4_N2 } from '$lib/domain/control-chart';

describe('individuals chart: NIST/SEMATECH e-Handbook §6.3.2.2 worked example', () => {
	// The handbook's flow-rate example, 10 batches, and the figures it prints.
	const flow = [49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1];
	const chart = individualsChart(flow)!;

	it('centre line, mean moving range and limits as printed', () => {
		expect(chart.mean).toBeCloseTo(50.81, 10); // "Xbar = 50.81"
		expect(chart.mrBar).toBeCloseTo(1.8778, 4); // "MRbar = 1.8778"
		expect(chart.ucl).toBeCloseTo(55.8041, 3); // "UCL = 55.8041"
		expect(chart.lcl).toBeCloseTo(45.8159, 3); // "LCL = 45.8159"
	});

	it('moving ranges as in the handbook table', () => {
		expect(chart.movingRanges[0]).toBeNull();
		const printed = [2.0, 2.3, 1.4, 3.5, 3.4, 1.4, 0.2, 1.2, 1.5];
		chart.movingRanges.slice(1).forEach((mr, i) => expect(mr).toBeCloseTo(printed[i], 10));
	});

	it('"the process is in control": no point beyond a limit', () => {
		expect(chart.signals.filter((s) => s.rule === 'beyond3')).toEqual([]);
		// Moving-range limit D4·MR̄ = 3.267 × 1.8778 = 6.135 (D4 for n = 2, from the Shewhart
		// constant table; from memory): the largest MR, 3.5, is inside.
		expect(chart.mrUcl).toBeCloseTo(3.267 * 1.8778, 3);
		expect(chart.signals).toEqual([]);
	});

	it('uses d2 = 1.128 and D4 = 3.267 for ranges of two', () => {
		expect(D2_N2).toBe(1.128);
		expect(D4_N2).toBe(3.267);
	});

	it('needs two points, and calls limits from fewer than 20 provisional (common practice)', () => {
		expect(individualsChart([1])).toBeNull();
		expect(individualsChart([1, 2])!.provisional).toBe(true);
		expect(individualsChart(Array.from({ length: 20 }, (_, i) => i % 2))!.provisional).toBe(false);
	});

	it('a flat series has no spread and no signals', () => {
		const flat = individualsChart([5, 5, 5, 5, 5, 5, 5, 5, 5, 5])!;
		expect(flat.sigma).toBe(0);
		expect(flat.signals).toEqual([]);
	});
});

describe('Western Electric run rules (NIST §6.3.2), centre 0 and σ 1 as a given standard', () => {
	const at = (values: number[], mrUcl = 100) =>
		runRuleSignals(values, { mean: 0, sigma: 1, mrUcl }).map(
			(s) => `${s.rule}@${s.index}:${s.side}`
		);

	it('a point beyond 3σ; exactly on the 3σ line is not beyond', () => {
		expect(at([0, 3.01])).toContain('beyond3@1:above');
		expect(at([0, -3.2])).toContain('beyond3@1:below');
		expect(at([0, 3]).filter((s) => s.startsWith('beyond3'))).toEqual([]);
	});

	it('2 of 3 beyond 2σ on one side; two on opposite sides do not count', () => {
		expect(at([2.5, 0, 2.2])).toContain('twoOfThree@2:above');
		expect(at([2.5, 0, -2.2]).filter((s) => s.startsWith('twoOfThree'))).toEqual([]);
		expect(at([2, 0, 2]).filter((s) => s.startsWith('twoOfThree'))).toEqual([]); // ties
	});

	it('4 of 5 beyond 1σ on one side', () => {
		expect(at([1.5, 1.5, 0, 1.5, 1.5])).toContain('fourOfFive@4:above');
		expect(at([1.5, 1.5, 0, 0, 1.5]).filter((s) => s.startsWith('fourOfFive'))).toEqual([]);
		expect(at([-1.1, -1.2, -1.3, -1.4])).toContain('fourOfFive@3:below');
	});

	it('8 in a row on one side; a point on the centre line breaks the run', () => {
		const eight = [0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5];
		expect(at(eight)).toContain('eightOneSide@7:above');
		expect(at(eight.slice(0, 7)).filter((s) => s.startsWith('eight'))).toEqual([]);
		const broken = [0.5, 0.5, 0.5, 0, 0.5, 0.5, 0.5, 0.5];
		expect(at(broken).filter((s) => s.startsWith('eight'))).toEqual([]);
	});

	it('a jump beyond the moving-range limit', () => {
		expect(at([0, 0.5, -0.5], 0.9)).toEqual(['mrBeyond@2:null']);
	});
});
