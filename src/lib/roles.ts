/** The roles people hold. What each may do is in `$lib/policy` (named capabilities). */
import { can, ROLE_NAMES, type Capability, type RoleName } from './policy';

export { ROLE_NAMES, type RoleName };

export const ROLE_LABELS: Record<RoleName, string> = {
	admin: 'Administrator',
	workshop: 'Workshop',
	field_tech: 'Field technician',
	warranty: 'Warranty officer',
	dealer: 'Dealer'
};

export interface NavItem {
	href: string;
	/** The job the area belongs to: the menu shows one entry per group. */
	group: NavGroupKey;
	label: string;
	/** The capability a person needs to see the area (the same one its route guards ask for). */
	capability: Capability;
	/** One line on the home page saying what the area is for. */
	blurb: string;
}

/** The jobs the menu is grouped by, in display order. */
export const NAV_GROUPS = [
	{ key: 'home', label: 'Home' },
	{ key: 'workshop', label: 'Workshop' },
	{ key: 'field', label: 'Field' },
	{ key: 'warranty', label: 'Warranty' },
	{ key: 'register', label: 'Register' },
	{ key: 'admin', label: 'Administration' }
] as const;
export type NavGroupKey = (typeof NAV_GROUPS)[number]['key'];

/** Every area of the app, with the capability that opens it. Order is display order. */
export const NAV: NavItem[] = [
	{ href: '/', group: 'home', label: 'Home', capability: 'viewHome', blurb: '' },
	{
		href: '/dashboard',
		group: 'register',
		label: 'Dashboard',
		capability: 'viewDashboard',
		blurb: 'Modules by state and model, builds and shipments per week.'
	},
	{
		href: '/bench',
		group: 'workshop',
		label: 'Build bench',
		capability: 'build',
		blurb: 'Scan a label, record cells and checks, next.'
	},
	{
		href: '/allocations',
		group: 'workshop',
		label: 'Serials & labels',
		capability: 'allocateSerials',
		blurb: 'Reserve serials for a model and print their QR labels.'
	},
	{
		href: '/imports',
		group: 'workshop',
		label: 'Test imports',
		capability: 'importResults',
		blurb: 'Send rig CSV files, check the preview, store the results.'
	},
	{
		href: '/quality',
		group: 'workshop',
		label: 'Batch quality',
		capability: 'viewQuality',
		blurb: 'Spread, capability and outliers of factory test results.'
	},
	{
		href: '/shipments',
		group: 'workshop',
		label: 'Shipments',
		capability: 'ship',
		blurb: 'Scan passed modules onto a shipment, print the packing list, dispatch to a dealer.'
	},
	{
		href: '/returns',
		group: 'workshop',
		label: 'Returns',
		capability: 'handleReturn',
		blurb: 'Scan returned modules in, inspect them, then rework, keep or scrap them.'
	},
	{
		href: '/sites',
		group: 'field',
		label: 'Sites',
		capability: 'viewInstallations',
		blurb: 'Installation sites, their systems and the modules placed in them.'
	},
	{
		href: '/claims',
		group: 'warranty',
		label: 'Claims',
		capability: 'viewClaims',
		blurb: 'Warranty claims: file one, follow the evidence, the assessment and the decision.'
	},
	{
		href: '/campaigns',
		group: 'warranty',
		label: 'Campaigns',
		capability: 'followCampaigns',
		blurb: 'Service campaigns: affected modules followed per dealer to their remedy.'
	},
	{
		href: '/fleet',
		group: 'register',
		label: 'Fleet',
		capability: 'viewFleet',
		blurb: 'Every module you may see: filter, sort, share the view, export CSV.'
	},
	{
		href: '/modules',
		group: 'register',
		label: 'Module lookup',
		capability: 'lookUpModules',
		blurb: 'Find a module by serial and open its record.'
	},
	{
		href: '/trace',
		group: 'register',
		label: 'Traceability',
		capability: 'trace',
		blurb:
			'From a cell lot, model, build period or import to every affected module and where it is.'
	},
	{
		href: '/passports',
		group: 'register',
		label: 'Passports',
		capability: 'exportPassports',
		blurb:
			'Export the battery passports of a shipment, lot or model; access links for recyclers and authorities.'
	},
	{
		href: '/reliability',
		group: 'warranty',
		label: 'Reliability',
		capability: 'viewReliability',
		blurb: 'Claim rates with intervals, the fitted life model and the claims still to come.'
	},
	{
		href: '/admin/models',
		group: 'admin',
		label: 'Models',
		capability: 'manageModels',
		blurb: 'Rated data, test limits and warranty terms of each model.'
	},
	{
		href: '/admin/users',
		group: 'admin',
		label: 'People',
		capability: 'manageUsers',
		blurb: 'Invite staff, dealers and technicians; see who has access.'
	},
	{
		href: '/admin/dealers',
		group: 'admin',
		label: 'Dealers',
		capability: 'manageDealers',
		blurb: 'Dealer organisations, their contact address and region; who may receive shipments.'
	},
	{
		href: '/admin/organisation',
		group: 'admin',
		label: 'Calendar',
		capability: 'manageCalendar',
		blurb: 'The time zone business dates are counted in, and the locale pages print in.'
	},
	{
		href: '/admin/rule-sets',
		group: 'admin',
		label: 'Rule sets',
		capability: 'manageRuleSets',
		blurb: 'Commissioning limits and the citations each certificate prints, per market and version.'
	},
	{
		href: '/admin/tokens',
		group: 'admin',
		label: 'Rig tokens',
		capability: 'manageTokens',
		blurb: 'API tokens that let test rigs send results on their own.'
	},
	{
		href: '/admin/outbox',
		group: 'admin',
		label: 'Outbox',
		capability: 'viewOutbox',
		blurb: 'Every e-mail the register has sent.'
	},
	{
		href: '/admin/audit',
		group: 'admin',
		label: 'Audit trail',
		capability: 'viewAudit',
		blurb: 'Who changed what, and when, with the values before and after.'
	}
];

export function navFor(role: RoleName): NavItem[] {
	return NAV.filter((n) => can(role, n.capability));
}

export interface NavGroup {
	key: NavGroupKey;
	label: string;
	items: NavItem[];
}

/**
 * The areas a role may open, grouped by job in a fixed order; groups with nothing for the role
 * are left out, so each role's menu is short and always in the same places.
 */
export function navGroupsFor(role: RoleName): NavGroup[] {
	const mine = navFor(role);
	return NAV_GROUPS.map((g) => ({
		key: g.key,
		label: g.label,
		items: mine.filter((n) => n.group === g.key)
	})).filter((g) => g.items.length > 0);
}

/** The header's menu for one person: what the shell shows, without the table it comes from. */
export interface Menu {
	roleLabel: string;
	groups: { key: NavGroupKey; label: string; items: { href: string; label: string }[] }[];
}

/**
 * The menu of a role, built on the server (the root layout's load), so the browser does not
 * download the whole area table and the policy to draw a header.
 */
export function menuFor(role: RoleName): Menu {
	return {
		roleLabel: ROLE_LABELS[role] ?? role,
		groups: navGroupsFor(role).map((g) => ({
			key: g.key,
			label: g.label,
			items: g.items.map((i) => ({ href: i.href, label: i.label }))
		}))
	};
}
