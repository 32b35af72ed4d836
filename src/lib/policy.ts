/**
 * Who may do what: every named capability of the register and the roles that hold it. The
 * server guards (`requireCan`, `requireApiActor`), the services' own checks and the navigation
 * all read this one table, so a role set is written once. Pure: safe in the browser too.
 *
 * Adding a capability: add a line here, give it to the roles that need it, use the name in the
 * guard of each route (and in `tests/server/guard-coverage.test.ts`'s table of routes).
 */

/** The roles people hold (their labels and the navigation are in `./roles`). */
export const ROLE_NAMES = ['admin', 'workshop', 'field_tech', 'warranty', 'dealer'] as const;
export type RoleName = (typeof ROLE_NAMES)[number];

const EVERYONE = ROLE_NAMES;
const WORKSHOP = ['workshop', 'admin'] as const;
const FACTORY_READERS = ['admin', 'workshop', 'warranty'] as const;
const INSTALLERS = ['field_tech', 'admin'] as const;
const INSTALLATION_READERS = ['field_tech', 'dealer', 'admin', 'warranty'] as const;
const CLAIM_PARTIES = ['warranty', 'admin', 'dealer', 'field_tech'] as const;
const OFFICERS = ['warranty', 'admin'] as const;
const ADMIN = ['admin'] as const;

export const POLICY = {
	/** Home page and the figures on it. */
	viewHome: EVERYONE,
	/** Fleet table, its CSV export and the columns a person chose. */
	viewFleet: EVERYONE,
	/** Find a module by serial and open its record (dealers see their own modules only). */
	lookUpModules: EVERYONE,
	/** Check a system design against a module and an inverter (nothing is stored). */
	checkDesign: EVERYONE,
	/** Dashboard of modules by state, builds and shipments. */
	viewDashboard: FACTORY_READERS,
	/** Reserve serials for a model and print their QR labels. */
	allocateSerials: WORKSHOP,
	/** Record a module's build at the bench (cells, checks). */
	build: WORKSHOP,
	/** Send factory test results (rig CSV files) and store them. */
	importResults: WORKSHOP,
	/** Spread, capability and outliers of factory test results. */
	viewQuality: FACTORY_READERS,
	/** Put passed modules on a shipment, print its packing list, dispatch it. */
	ship: WORKSHOP,
	/** From a cell lot, model, period or import to every affected module. */
	trace: FACTORY_READERS,
	/** Send a service notice to the dealers of traced modules. */
	sendServiceNotice: ADMIN,
	/** Installation sites, systems, commissionings and their photos. */
	viewInstallations: INSTALLATION_READERS,
	/** Record sites and systems and place modules in them. */
	install: INSTALLERS,
	/** Fill in and submit a commissioning checklist. */
	commission: INSTALLERS,
	/**
	 * Take a site's field pages onto the phone and send the work done offline
	 * (`POST /api/sync`); each operation is then checked as its own form is.
	 */
	workOffline: INSTALLERS,
	/** See warranty claims (a dealer's people see their organisation's only) and assess one. */
	viewClaims: CLAIM_PARTIES,
	/** File a warranty claim. */
	fileClaim: CLAIM_PARTIES,
	/** Add evidence, photos or a comment to a claim. */
	addClaimEvidence: CLAIM_PARTIES,
	/** Move a claim through review and decide it. */
	decideClaim: OFFICERS,
	/** Record the replacement module of a covered claim. */
	replaceModule: ['warranty', 'admin', 'field_tech'],
	/** Export the passports of a shipment, lot or model for a customer or authority. */
	exportPassports: FACTORY_READERS,
	/** Issue and revoke time-limited passport access links for recyclers, repairers, authorities. */
	grantPassportAccess: ADMIN,
	/** Fleet reliability: claim rates, the life model and the warranty reserve. */
	viewReliability: OFFICERS,
	/** Record the inspection of a returned module. */
	inspectReturn: OFFICERS,
	/** Scan a returned module in (its condition on arrival) and record what became of it. */
	handleReturn: ['workshop', 'warranty', 'admin'],
	/** Record the rework of a failed or inspected module (back to built, to be retested). */
	reworkModule: WORKSHOP,
	/** Scrap a module held in the workshop, with the reason. */
	scrapModule: WORKSHOP,
	/** Correct a wrongly registered build, with the reason. */
	correctBuild: WORKSHOP,
	/** Open a service campaign over traced modules or a list of serials. */
	openCampaign: FACTORY_READERS,
	/** See service campaigns (a dealer sees its own modules only) and act on their modules. */
	followCampaigns: ['admin', 'workshop', 'warranty', 'dealer'],
	/** Models: rated data, test limits, warranty terms. */
	manageModels: ADMIN,
	/** Invite people and change their access. */
	manageUsers: ADMIN,
	/** Dealer organisations. */
	manageDealers: ADMIN,
	/** The assembler's calendar: the time zone business dates are counted in, the locale pages print in. */
	manageCalendar: ADMIN,
	/** Commissioning rule sets per market (limits, citations, effective date) and each dealer's market. */
	manageRuleSets: ADMIN,
	/** API tokens of the test rigs. */
	manageTokens: ADMIN,
	/** Every e-mail the register has sent. */
	viewOutbox: ADMIN,
	/** The append-only audit trail. */
	viewAudit: ADMIN,
	/** The server's own measurements (event-loop delay), when PACKLEDGER_DIAGNOSTICS=1. */
	viewDiagnostics: ADMIN
} as const satisfies Record<string, readonly RoleName[]>;

export type Capability = keyof typeof POLICY;
export const CAPABILITIES = Object.keys(POLICY) as Capability[];

export function isCapability(name: string): name is Capability {
	return Object.hasOwn(POLICY, name);
}

/** The roles that hold a capability, in the table's order. */
export function rolesFor(capability: Capability): readonly RoleName[] {
	return POLICY[capability];
}

/**
 * Whether a role holds a capability. Anything that is not a person's role (no role, the
 * system actor, an API token's `rig`) holds none: callers that let the system act say so.
 */
export function can(role: string | null | undefined, capability: Capability): boolean {
	return !!role && (POLICY[capability] as readonly string[]).includes(role);
}
