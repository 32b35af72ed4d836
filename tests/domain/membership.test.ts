import { describe, expect, it } from 'vitest';
import { membershipProblem, roleFitsOrganisation } from '$lib/domain/membership';

describe('which role fits which organisation', () => {
	it('staff roles belong to the assembler, dealers to a dealer, technicians to either', () => {
		expect(roleFitsOrganisation('warranty', 'assembler')).toBe(true);
		expect(roleFitsOrganisation('warranty', 'dealer')).toBe(false);
		expect(roleFitsOrganisation('dealer', 'dealer')).toBe(true);
		expect(roleFitsOrganisation('dealer', 'assembler')).toBe(false);
		expect(roleFitsOrganisation('field_tech', 'dealer')).toBe(true);
		expect(roleFitsOrganisation('field_tech', 'assembler')).toBe(true);
	});

	it('says why in words, never with the role code', () => {
		expect(membershipProblem('warranty', 'dealer')).toBe(
			'A Warranty officer belongs to the assembler, not to a dealer.'
		);
		expect(membershipProblem('admin', 'dealer')).toBe(
			'An Administrator belongs to the assembler, not to a dealer.'
		);
		expect(membershipProblem('dealer', 'assembler')).toBe(
			'A Dealer belongs to a dealer organisation, not to the assembler.'
		);
		expect(membershipProblem('field_tech', 'dealer')).toBeNull();
		expect(membershipProblem('workshop', 'dealer')).toBe(
			'Workshop staff belong to the assembler, not to a dealer.'
		);
	});
});
