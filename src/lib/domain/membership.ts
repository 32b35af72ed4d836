/**
 * Which roles a person may hold in which kind of organisation, said in words.
 * Staff roles belong to the assembler; a dealer's people are dealers; field technicians
 * work for either.
 */
export type OrganisationKind = 'assembler' | 'dealer';
export type MemberRole = 'admin' | 'workshop' | 'field_tech' | 'warranty' | 'dealer';

/** How a sentence names a holder of the role (its subject and verb). */
const SUBJECT: Record<MemberRole, string> = {
	admin: 'An Administrator belongs',
	workshop: 'Workshop staff belong',
	field_tech: 'A Field technician belongs',
	warranty: 'A Warranty officer belongs',
	dealer: 'A Dealer belongs'
};

export function roleFitsOrganisation(role: MemberRole, kind: OrganisationKind): boolean {
	if (role === 'dealer') return kind === 'dealer';
	if (role === 'field_tech') return true;
	return kind === 'assembler';
}

/** Why a role does not fit an organisation, as a sentence; null when it fits. */
export function membershipProblem(role: MemberRole, kind: OrganisationKind): string | null {
	if (roleFitsOrganisation(role, kind)) return null;
	return role === 'dealer'
		? `${SUBJECT.dealer} to a dealer organisation, not to the assembler.`
		: `${SUBJECT[role]} to the assembler, not to a dealer.`;
}
