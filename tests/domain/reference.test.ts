import { describe, expect, it } from 'vitest';
import { parseYearlyReference, yearlyPrefix, yearlyReference } from '$lib/domain/reference';

describe('yearly references', () => {
	it('pads to the minimum width and grows past it', () => {
		expect(yearlyReference('CL', 2026, 42, 4)).toBe('CL-2026-0042');
		expect(yearlyReference('PLC', 2026, 99_999, 5)).toBe('PLC-2026-99999');
		expect(yearlyReference('PLC', 2026, 100_000, 5)).toBe('PLC-2026-100000');
	});
	it('reads a reference back as numbers, so 100000 comes after 99999', () => {
		const a = parseYearlyReference('PLC', 'PLC-2026-99999')!;
		const b = parseYearlyReference('PLC', 'PLC-2026-100000')!;
		expect(b.n).toBeGreaterThan(a.n);
		// Text order (what the old query used) gets it wrong:
		expect(['PLC-2026-99999', 'PLC-2026-100000'].sort()[1]).toBe('PLC-2026-99999');
	});
	it('refuses other codes and shapes', () => {
		expect(parseYearlyReference('CL', 'SH-2026-0001')).toBeNull();
		expect(parseYearlyReference('CL', 'CL-26-0001')).toBeNull();
		expect(parseYearlyReference('CL', `CL-2026-${'9'.repeat(200_000)}`)).toBeNull();
		expect(() => yearlyReference('CL', 2026, 0, 4)).toThrow(RangeError);
		expect(yearlyPrefix('SH', 2027)).toBe('SH-2027-');
	});
});
