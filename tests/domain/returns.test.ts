/**
 * Returns: the authorisation number, where a return stands, and which arrival conditions call
 * for quarantine (a damaged lithium module can vent or ignite later — common practice for
 * damaged batteries, as carriers' and fire services' guidance states it).
 */
import { describe, expect, it } from 'vitest';
import { needsQuarantine, raNumberFor, returnStep } from '../../src/lib/domain/returns';

describe('returns', () => {
	it('numbers a return after its claim and the module position', () => {
		expect(raNumberFor('CL-2026-0007', 2)).toBe('RA-2026-0007-2');
		expect(() => raNumberFor('SH-2026-0001', 1)).toThrow();
		expect(() => raNumberFor('CL-2026-0007', 0)).toThrow();
	});
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
});
