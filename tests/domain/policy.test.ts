/**
 * The policy against the product's role descriptions (README "What is where" and the role
 * table of the product description: admin manages and sees everything; workshop allocates,
 * builds, imports and ships; field technicians record sites and commission; warranty officers
 * decide claims; dealers see their own units and file claims). The matrix below is written out
 * by hand from those descriptions, not read from src/lib/policy.ts.
 */
import { describe, expect, it } from 'vitest';
import {
	can,
	CAPABILITIES,
	isCapability,
	POLICY,
	ROLE_NAMES,
	rolesFor
} from '../../src/lib/policy';
import { menuFor, NAV, NAV_GROUPS, navFor, navGroupsFor } from '../../src/lib/roles';

const A = 'admin',
	W = 'workshop',
	F = 'field_tech',
	O = 'warranty',
	D = 'dealer';

/** Capability → exactly the roles that hold it. */
const EXPECTED: Record<string, string[]> = {
	viewHome: [A, W, F, O, D],
	viewFleet: [A, W, F, O, D],
	lookUpModules: [A, W, F, O, D],
	checkDesign: [A, W, F, O, D],
	viewDashboard: [A, W, O],
	allocateSerials: [A, W],
	build: [A, W],
	importResults: [A, W],
	viewQuality: [A, W, O],
	ship: [A, W],
	trace: [A, W, O],
	sendServiceNotice: [A],
	viewInstallations: [A, F, O, D],
	install: [A, F],
	commission: [A, F],
	workOffline: [A, F],
	viewClaims: [A, F, O, D],
	fileClaim: [A, F, O, D],
	addClaimEvidence: [A, F, O, D],
	decideClaim: [A, O],
	viewReliability: [A, O],
	exportPassports: [A, W, O],
	grantPassportAccess: [A],
	replaceModule: [A, F, O],
	inspectReturn: [A, O],
	handleReturn: [A, W, O],
	reworkModule: [A, W],
	scrapModule: [A, W],
	correctBuild: [A, W],
	openCampaign: [A, W, O],
	followCampaigns: [A, W, O, D],
	manageModels: [A],
	manageUsers: [A],
	manageDealers: [A],
	manageCalendar: [A],
	manageRuleSets: [A],
	manageTokens: [A],
	viewOutbox: [A],
	viewAudit: [A],
	viewDiagnostics: [A]
};

describe('policy: named capabilities and the roles that hold them', () => {
	it('has exactly the capabilities of the matrix', () => {
		expect([...CAPABILITIES].sort()).toEqual(Object.keys(EXPECTED).sort());
	});

	for (const [capability, holders] of Object.entries(EXPECTED))
		for (const role of ROLE_NAMES)
			it(`${role} ${holders.includes(role) ? 'may' : 'may not'} ${capability}`, () =>
				expect(can(role, capability as keyof typeof POLICY)).toBe(holders.includes(role)));

	it('the administrator holds every capability', () =>
		expect(CAPABILITIES.filter((c) => !can('admin', c))).toEqual([]));

	it('a dealer never moves, decides or ships anything of the assembler', () => {
		for (const c of ['decideClaim', 'inspectReturn', 'ship', 'build', 'importResults'] as const)
			expect(can('dealer', c)).toBe(false);
	});

	it('no role, the system actor, a rig token or a made-up role hold nothing', () => {
		for (const who of [null, undefined, '', 'system', 'rig', 'Admin', 'admin ', 'root'])
			expect(CAPABILITIES.filter((c) => can(who, c))).toEqual([]);
	});

	it('does not take inherited object keys for capabilities', () => {
		expect(isCapability('toString')).toBe(false);
		expect(isCapability('constructor')).toBe(false);
		expect(isCapability('ship')).toBe(true);
	});

	it('rolesFor lists the holders', () =>
		expect([...rolesFor('decideClaim')].sort()).toEqual([A, O]));
});

describe('navigation follows the policy', () => {
	it('every area names a capability of the policy', () =>
		expect(NAV.filter((n) => !isCapability(n.capability))).toEqual([]));

	it('a dealer sees home, sites, claims, its campaigns, fleet and module lookup only', () =>
		expect(navFor('dealer').map((n) => n.href)).toEqual([
			'/',
			'/sites',
			'/claims',
			'/campaigns',
			'/fleet',
			'/modules'
		]));

	it('the workshop does not see the admin areas or claims', () => {
		const hrefs = navFor('workshop').map((n) => n.href);
		expect(hrefs).toContain('/shipments');
		expect(hrefs.filter((h) => h.startsWith('/admin') || h === '/claims')).toEqual([]);
	});

	it('every area belongs to one of the groups', () => {
		const keys = new Set<string>(NAV_GROUPS.map((g) => g.key));
		expect(NAV.filter((n) => !keys.has(n.group))).toEqual([]);
	});

	it('groups keep their fixed order and leave out the empty ones (dealer)', () =>
		expect(navGroupsFor('dealer').map((g) => g.key)).toEqual([
			'home',
			'field',
			'warranty',
			'register'
		]));

	// Common practice (menu design): about seven top-level entries is what fits one row on a
	// 1024 px screen and what people scan at a glance; the admin, who sees every area, gets six.
	it('no role has more than seven top-level menu entries', () => {
		for (const role of ['admin', 'workshop', 'field_tech', 'warranty', 'dealer'] as const)
			expect(navGroupsFor(role).length, role).toBeLessThanOrEqual(7);
		expect(navGroupsFor('admin').length).toBe(NAV_GROUPS.length);
	});

	it('grouping neither adds nor drops an area a role may open', () => {
		for (const role of ['admin', 'workshop', 'field_tech', 'warranty', 'dealer'] as const)
			expect(
				navGroupsFor(role)
					.flatMap((g) => g.items.map((i) => i.href))
					.sort()
			).toEqual(
				navFor(role)
					.map((n) => n.href)
					.sort()
			);
	});

	it('the menu the layout sends is the grouping, with only what the header draws', () => {
		for (const role of ['admin', 'workshop', 'field_tech', 'warranty', 'dealer'] as const) {
			const menu = menuFor(role);
			expect(menu.groups.map((g) => g.key)).toEqual(navGroupsFor(role).map((g) => g.key));
			expect(menu.groups.flatMap((g) => g.items.map((i) => i.href)).sort()).toEqual(
				navFor(role)
					.map((n) => n.href)
					.sort()
			);
			for (const i of menu.groups.flatMap((g) => g.items))
				expect(Object.keys(i).sort()).toEqual(['href', 'label']);
		}
		expect(menuFor('field_tech').roleLabel).toBe('Field technician');
	});
});
