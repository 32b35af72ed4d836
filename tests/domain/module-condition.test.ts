/**
 * The condition sentence and the installable flag of the public record, and the passport
 * status. Expected values are written from the product's rules for the public record (a
 * module that failed, waits for a retest, was returned, replaced or scrapped, or is under an
 * open campaign says so first, with "Do not install"; a returned module's warranty moved to
 * its replacement) and the statuses of Regulation (EU) 2023/1542 Annex XIII §4(c) (original,
 * repurposed, re-used, remanufactured, waste).
 */
import { describe, expect, it } from 'vitest';
import { conditionOf, type ConditionInput } from '../../src/lib/domain/module-condition';
import { MODULE_STATES } from '../../src/lib/domain/module-lifecycle';
import { passportStatusOf, statusAfterRework } from '../../src/lib/domain/module-status';
import { toPublicRecord } from '../../src/lib/domain/public-record';

const base: ConditionInput = {
	state: 'in_stock',
	lastTest: { on: '2026-11-20', outcome: 'pass' },
	reworked: false,
	campaign: null,
	replacedBy: null,
	scrapped: null
};
const c = (over: Partial<ConditionInput>) => conditionOf({ ...base, ...over });

describe('condition of a module', () => {
	it('only a passed module in stock or at its dealer is installable', () => {
		const installable = MODULE_STATES.filter((state) => c({ state }).installable);
		expect(installable).toEqual(['in_stock', 'shipped']);
	});

	it('says "Do not install" for every state held back from use', () => {
		for (const state of [
			'allocated',
			'built',
			'test_failed',
			'claim_open',
			'returned',
			'received_back',
			'inspected',
			'kept_for_analysis',
			'replaced',
			'scrapped'
		])
			expect(c({ state }).warning, state).toBe('Do not install');
		for (const state of ['in_stock', 'shipped', 'installed', 'commissioned'])
			expect(c({ state }).warning, state).toBeNull();
	});

	it('names the failed test day, the retest after rework, the replacement and the scrap reason', () => {
		expect(
			c({ state: 'test_failed', lastTest: { on: '2026-11-20', outcome: 'fail' } }).sentence
		).toBe(
			'This module failed its factory test on 2026-11-20 and is held in the workshop for rework or scrapping.'
		);
		expect(c({ state: 'built', reworked: true }).sentence).toMatch(/reworked .* retest/);
		expect(c({ state: 'returned', replacedBy: 'PL48-26-000027X' }).sentence).toMatch(
			/replaced by PL48-26-000027X/
		);
		expect(
			c({ state: 'scrapped', scrapped: { on: '2026-11-25', reason: 'Case cracked' } }).sentence
		).toMatch(/^This module was scrapped on 2026-11-25: Case cracked\./);
	});

	it('puts an open campaign first and holds an installable module back', () => {
		const campaign = {
			reference: 'SC-2026-001',
			title: 'Lot HCL-2640-A check',
			remedy: 'Check the torque of the interconnects.'
		};
		const inStock = c({ state: 'in_stock', campaign });
		expect(inStock.installable).toBe(false);
		expect(inStock.warning).toBe('Do not install');
		expect(inStock.sentence.startsWith('Service campaign SC-2026-001')).toBe(true);
		const inService = c({ state: 'commissioned', campaign });
		expect(inService.warning).toBeNull();
		expect(inService.sentence).toMatch(/^Service campaign SC-2026-001.*Contact the dealer/);
	});
});

describe('passport status follows the module', () => {
	it('is waste once scrapped, whatever was recorded before', () => {
		expect(passportStatusOf({ state: 'scrapped', lifecycleStatus: 'remanufactured' })).toBe(
			'waste'
		);
		expect(passportStatusOf({ state: 'in_stock', lifecycleStatus: 'remanufactured' })).toBe(
			'remanufactured'
		);
		expect(passportStatusOf({ state: 'commissioned' })).toBe('original');
	});
	it('a rework of a module that was in service remanufactures it; before service it stays original', () => {
		expect(statusAfterRework(true, null)).toBe('remanufactured');
		expect(statusAfterRework(false, null)).toBe('original');
	});
});

describe('public record warranty', () => {
	const model = {
		code: 'TC-HC-48',
		name: 'TC-HC 48 V module',
		gtin: null,
		variant: '48',
		cellsSeries: 22,
		cellMinV: 1.5,
		cellNominalV: 2.3,
		cellMaxV: 2.7,
		ratedAh: 46.5,
		usableWh: 2300,
		maxContinuousC: 3,
		burstC: 6,
		burstSeconds: 10,
		chargeTempMinC: -20,
		chargeTempMaxC: 45,
		dischargeTempMinC: -30,
		dischargeTempMaxC: 55,
		massKg: 28,
		minCapacityAh: 45,
		maxDcirMohm: 6.4,
		maxCellSpreadMv: 20,
		minInsulationMohm: 100,
		warrantyYears: 15,
		ratedCycles: 20000,
		referenceTempC: 25,
		endRetentionPct: 80,
		hotTempC: 55,
		hotRatedCycles: 4000
	};
	const rec = (state: string, extra: object = {}) =>
		toPublicRecord({
			serial: 'PL48-23-000001A',
			model: model as never,
			builtAt: new Date('2023-04-03T07:30:00Z'),
			state,
			warranty: { startsOn: '2023-06-12', endsOn: '2038-06-12' },
			assembler: { name: 'Tidewater Cellworks', email: null },
			dealer: null,
			today: '2026-11-25',
			...extra
		});
	it('a returned or replaced module does not show an active warranty: it moved to its replacement', () => {
		for (const state of [
			'returned',
			'received_back',
			'inspected',
			'kept_for_analysis',
			'replaced'
		]) {
			const r = rec(state, { replacedBy: 'PL48-26-000027X' });
			expect(r.warranty.state, state).toBe('moved');
			expect(r.warranty.note).toBe(
				'No warranty: its remaining warranty moved to its replacement PL48-26-000027X.'
			);
			expect(r.installable).toBe(false);
		}
	});
	it('the replacement says it carries the remainder', () => {
		const r = rec('commissioned', { replaces: 'PL48-23-000001A' });
		expect(r.warranty.state).toBe('active');
		expect(r.warranty.note).toMatch(/until 2038-06-12.*remaining warranty of PL48-23-000001A/);
	});
	it('a failed or scrapped module has no warranty note that promises one', () => {
		expect(rec('test_failed', { warranty: null }).warranty.state).toBe('none');
		expect(rec('scrapped').warranty).toMatchObject({
			state: 'none',
			note: 'No warranty: this module was scrapped.'
		});
	});
});
