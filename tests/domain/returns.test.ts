/**
 * Returns: the authorisation number, where a return stands, and which arrival conditions call
 * for quarantine (a damaged lithium module can vent or ignite later — common practice for
 * damaged batteries, as carriers' and fire services' guidance states it).
 */
import { describe, expect, it } from 'vitest';
import {
	needsQuarantine,
	refusalOf,
	RETURN_ACTION_MOVES,
	RETURN_ACTIONS,
	returnActionsAt,
	returnStep
} from '../../src/lib/domain/returns';
import { isTransition, MODULE_MOVES } from '../../src/lib/domain/module-lifecycle';

describe('returns', () => {
	it('stands where the last recorded step left it', () => {
		const none = { receivedAt: null, inspectedAt: null, returnOutcome: null };
		expect(returnStep(none)).toBe('on_its_way');
		expect(returnStep({ ...none, receivedAt: new Date() })).toBe('received');
		expect(returnStep({ ...none, receivedAt: new Date(), inspectedAt: new Date() })).toBe(
			'inspected'
		);
		expect(
			returnStep({ receivedAt: new Date(), inspectedAt: new Date(), returnOutcome: 'scrapped' })
		).toBe('closed');
	});
	it('quarantines a damaged or swollen module, not an intact one', () => {
		expect(needsQuarantine('intact')).toBe(false);
		expect(needsQuarantine('packaging_damaged')).toBe(false);
		expect(needsQuarantine('case_damaged')).toBe(true);
		expect(needsQuarantine('swollen_hot_or_leaking')).toBe(true);
	});
	// The order the issue sets out: on its way back → received → inspected once → reworked, kept
	// for analysis or scrapped (a kept module may still be reworked or scrapped later).
	it('opens each action only at its step', () => {
		expect(returnActionsAt('on_its_way', null)).toEqual(['receive']);
		expect(returnActionsAt('received', null)).toEqual(['inspect']);
		expect(returnActionsAt('inspected', null)).toEqual(['rework', 'keep', 'scrap']);
		expect(returnActionsAt('closed', 'kept_for_analysis')).toEqual(['rework', 'scrap']);
		expect(returnActionsAt('closed', 'scrapped')).toEqual([]);
		expect(returnActionsAt('closed', 'reworked')).toEqual([]);
	});
	it('says why a step out of order is refused', () => {
		const at = (step: Parameters<typeof refusalOf>[1]['step'], outcome = null as never) => ({
			raNumber: 'RA-2026-0001',
			step,
			outcome
		});
		expect(refusalOf('receive', at('on_its_way'))).toBeNull();
		expect(refusalOf('receive', at('received'))).toMatch(
			/already received; it is not on its way back/
		);
		expect(refusalOf('inspect', at('on_its_way'))).toMatch(/scan it in first/);
		expect(refusalOf('inspect', at('inspected'))).toMatch(/already inspected/);
		expect(refusalOf('scrap', at('received'))).toMatch(/must be inspected/);
		expect(refusalOf('scrap', at('on_its_way'))).toMatch(/received and inspected/);
		expect(refusalOf('keep', at('closed', 'kept_for_analysis' as never))).toMatch(/finished/);
		expect(refusalOf('scrap', at('closed', 'kept_for_analysis' as never))).toBeNull();
	});
	it('makes each action a move the module lifecycle allows from the state the step leaves', () => {
		const stateAt = {
			receive: 'returned',
			inspect: 'received_back',
			rework: 'inspected',
			keep: 'inspected',
			scrap: 'inspected'
		} as const;
		for (const action of RETURN_ACTIONS) {
			const { move } = RETURN_ACTION_MOVES[action];
			expect(isTransition(stateAt[action], move, MODULE_MOVES[move].to[0])).toBe(true);
		}
		expect(isTransition('kept_for_analysis', 'scrap', 'scrapped')).toBe(true);
		expect(isTransition('kept_for_analysis', 'rework', 'built')).toBe(true);
	});
});
