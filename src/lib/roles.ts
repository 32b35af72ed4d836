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
	label: string;
	/** The capability a person needs to see the area (the same one its route guards ask for). */
	capability: Capability;
	/** One line on the home page saying what the area is for. */
	blurb: string;
}

/** Every area of the app, with the capability that opens it. Order is display order. */
export const NAV: NavItem[] = [
	{ href: '/', label: 'Home', capability: 'viewHome', blurb: '' },
	{
		href: '/dashboard',
		label: 'Dashboard',
		capability: 'viewDashboard',
		blurb: 'Modules by state and model, builds and shipments per week.'
	},
	{
		href: '/bench',
		label: 'Build bench',
		capability: 'build',
		blurb: 'Scan a label, record cells and checks, next.'
	},
	{
		href: '/allocations',
		label: 'Serials & labels',
		capability: 'allocateSerials',
		blurb: 'Reserve serials for a model and print their QR labels.'
	},
	{
		href: '/imports',
		label: 'Test imports',
		capability: 'importResults',
		blurb: 'Send rig CSV files, check the preview, store the results.'
	},
	{
		href: '/quality',
		label: 'Batch quality',
		capability: 'viewQuality',
		blurb: 'Spread, capability and outliers of factory test results.'
	},
	{
		href: '/shipments',
		label: 'Shipments',
		capability: 'ship',
		blurb: 'Scan passed modules onto a shipment, print the packing list, dispatch to a dealer.'
	},
	{
		href: '/sites',
		label: 'Sites',
		capability: 'viewInstallations',
		blurb: 'Installation sites, their systems and the modules placed in them.'
	},
	{
		href: '/claims',
		label: 'Claims',
		capability: 'viewClaims',
		blurb: 'Warranty claims: file one, follow the evidence, the assessment and the decision.'
	},
	{
		href: '/campaigns',
		label: 'Campaigns',
		capability: 'followCampaigns',
		blurb: 'Service campaigns: affected modules followed per dealer to their remedy.'
	},
	{
		href: '/fleet',
		label: 'Fleet',
		capability: 'viewFleet',
		blurb: 'Every module you may see: filter, sort, share the view, export CSV.'
	},
	{
		href: '/modules',
		label: 'Module lookup',
		capability: 'lookUpModules',
		blurb: 'Find a module by serial and open its record.'
	},
	{
		href: '/trace',
		label: 'Traceability',
		capability: 'trace',
		blurb:
			'From a cell lot, model, build period or import to every affected module and where it is.'
	},
	{
		href: '/passports',
		label: 'Passports',
		capability: 'exportPassports',
		blurb:
			'Export the battery passports of a shipment, lot or model; access links for recyclers and authorities.'
	},
	{
		href: '/reliability',
		label: 'Reliability',
		capability: 'viewReliability',
		blurb: 'Claim rates with intervals, the fitted life model and the claims still to come.'
	},
	{
		href: '/admin/models',
		label: 'Models',
		capability: 'manageModels',
		blurb: 'Rated data, test limits and warranty terms of each model.'
	},
	{
		href: '/admin/users',
		label: 'People',
		capability: 'manageUsers',
		blurb: 'Invite staff, dealers and technicians; see who has access.'
	},
	{
		href: '/admin/dealers',
		label: 'Dealers',
		capability: 'manageDealers',
		blurb: 'Dealer organisations, their contact address and region; who may receive shipments.'
	},
	{
		href: '/admin/tokens',
		label: 'Rig tokens',
		capability: 'manageTokens',
		blurb: 'API tokens that let test rigs send results on their own.'
	},
	{
		href: '/admin/outbox',
		label: 'Outbox',
		capability: 'viewOutbox',
		blurb: 'Every e-mail the register has sent.'
	},
	{
		href: '/admin/audit',
		label: 'Audit trail',
		capability: 'viewAudit',
		blurb: 'Who changed what, and when, with the values before and after.'
	}
];

export function navFor(role: RoleName): NavItem[] {
	return NAV.filter((n) => can(role, n.capability));
}
