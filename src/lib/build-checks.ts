// Words shown on pages; no zod here, so a page importing them does not carry the schema library.
/** Assembly checks confirmed at the bench; every one must be ticked to register a build. */
export const BUILD_CHECKS = [
	{ key: 'interconnects_torqued', label: 'Interconnects torqued to the model’s specification' },
	{ key: 'balancing_verified', label: 'Balancing network connected and verified' },
	{ key: 'polarity_marked', label: 'Terminal polarity marked and checked' },
	{ key: 'case_closed', label: 'Case closed, seals and vents in place' },
	{ key: 'label_applied', label: 'Serial label applied and readable' }
] as const;
export type BuildCheckKey = (typeof BUILD_CHECKS)[number]['key'];
