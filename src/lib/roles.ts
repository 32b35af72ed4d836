/** Roles and what each may reach. Shared by the server guards and the navigation. */
export const ROLE_NAMES = ['admin', 'workshop', 'field_tech', 'warranty', 'dealer'] as const;
export type RoleName = (typeof ROLE_NAMES)[number];

export const ROLE_LABELS: Record<RoleName, string> = {
	admin: 'Administrator',
	workshop: 'Workshop',
	field_tech: 'Field technician',
	warranty: 'Warranty officer',
	dealer: 'Dealer'
};

/** Pure role check used inside every handler (never a URL-prefix rule). */
export function hasRole(role: string | null | undefined, allowed: readonly RoleName[]): boolean {
	return !!role && (allowed as readonly string[]).includes(role);
}

export interface NavItem {
	href: string;
	label: string;
	roles: readonly RoleName[];
	/** One line on the home page saying what the area is for. */
	blurb: string;
}

/** Every area of the app, with the roles that see it. Order is display order. */
export const NAV: NavItem[] = [
	{ href: '/', label: 'Home', roles: ROLE_NAMES, blurb: '' },
	{
		href: '/dashboard',
		label: 'Dashboard',
		roles: ['admin', 'workshop', 'warranty'],
		blurb: 'Modules by state and model, builds and shipments per week.'
	},
	{
		href: '/bench',
		label: 'Build bench',
		roles: ['workshop', 'admin'],
		blurb: 'Scan a label, record cells and checks, next.'
	},
	{
		href: '/allocations',
		label: 'Serials & labels',
		roles: ['workshop', 'admin'],
		blurb: 'Reserve serials for a model and print their QR labels.'
	},
	{
		href: '/imports',
		label: 'Test imports',
		roles: ['workshop', 'admin'],
		blurb: 'Send rig CSV files, check the preview, store the results.'
	},
	{
		href: '/quality',
		label: 'Batch quality',
		roles: ['workshop', 'admin', 'warranty'],
		blurb: 'Spread, capability and outliers of factory test results.'
	},
	{
		href: '/shipments',
		label: 'Shipments',
		roles: ['workshop', 'admin'],
		blurb: 'Scan passed modules onto a shipment, print the packing list, dispatch to a dealer.'
	},
	{
		href: '/sites',
		label: 'Sites',
		roles: ['field_tech', 'dealer', 'admin', 'warranty'],
		blurb: 'Installation sites, their systems and the modules placed in them.'
	},
	{
		href: '/claims',
		label: 'Claims',
		roles: ['warranty', 'admin', 'dealer', 'field_tech'],
		blurb: 'Warranty claims: file one, follow the evidence, the assessment and the decision.'
	},
	{
		href: '/fleet',
		label: 'Fleet',
		roles: ROLE_NAMES,
		blurb: 'Every module you may see: filter, sort, share the view, export CSV.'
	},
	{
		href: '/modules',
		label: 'Module lookup',
		roles: ROLE_NAMES,
		blurb: 'Find a module by serial and open its record.'
	},
	{
		href: '/trace',
		label: 'Traceability',
		roles: ['admin', 'workshop', 'warranty'],
		blurb:
			'From a cell lot, model, build period or import to every affected module and where it is.'
	},
	{
		href: '/reliability',
		label: 'Reliability',
		roles: ['warranty', 'admin'],
		blurb: 'Claim rates with intervals, the fitted life model and the claims still to come.'
	},
	{
		href: '/admin/models',
		label: 'Models',
		roles: ['admin'],
		blurb: 'Rated data, test limits and warranty terms of each model.'
	},
	{
		href: '/admin/users',
		label: 'People',
		roles: ['admin'],
		blurb: 'Invite staff, dealers and technicians; see who has access.'
	},
	{
		href: '/admin/dealers',
		label: 'Dealers',
		roles: ['admin'],
		blurb: 'Dealer organisations, their contact address and region; who may receive shipments.'
	},
	{
		href: '/admin/tokens',
		label: 'Rig tokens',
		roles: ['admin'],
		blurb: 'API tokens that let test rigs send results on their own.'
	},
	{
		href: '/admin/outbox',
		label: 'Outbox',
		roles: ['admin'],
		blurb: 'Every e-mail the register has sent.'
	},
	{
		href: '/admin/audit',
		label: 'Audit trail',
		roles: ['admin'],
		blurb: 'Who changed what, and when, with the values before and after.'
	}
];

export function navFor(role: RoleName): NavItem[] {
	return NAV.filter((n) => n.roles.includes(role));
}
