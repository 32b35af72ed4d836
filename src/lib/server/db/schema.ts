import { sql } from 'drizzle-orm';
import {
	index,
	integer,
	blob,
	primaryKey,
	real,
	sqliteTable,
	text,
	uniqueIndex
} from 'drizzle-orm/sqlite-core';
import { ROLE_NAMES, type RoleName } from '../../policy';
import { MODULE_STATES, type ModuleState } from '../../domain/module-lifecycle';
import {
	CLAIM_DECISIONS,
	CLAIM_KINDS,
	CLAIM_STATES,
	type ClaimState
} from '../../domain/claim-workflow';
import { PASSPORT_STATUSES } from '../../domain/module-status';
import { CAMPAIGN_ITEM_STATES, CAMPAIGN_OUTCOMES, CAMPAIGN_ACTIONS } from '../../domain/campaign';
import { RETURN_OUTCOMES } from '../../domain/returns';

const createdAt = () =>
	integer('created_at', { mode: 'timestamp_ms' })
		.notNull()
		.default(sql`(unixepoch('subsec') * 1000)`);

export const ROLES = ROLE_NAMES;
export type Role = RoleName;

export const organisations = sqliteTable('organisations', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	kind: text('kind', { enum: ['assembler', 'dealer'] }).notNull(),
	name: text('name').notNull().unique(),
	contactEmail: text('contact_email'),
	region: text('region'),
	/** The market whose commissioning rule set applies to this organisation's sites; null = the default set. */
	market: text('market'),
	active: integer('active', { mode: 'boolean' }).notNull().default(true),
	/** IANA time zone of the organisation's calendar (business dates are days in it), e.g. Etc/GMT-10. */
	timeZone: text('time_zone').notNull().default('UTC'),
	/** BCP 47 locale its pages print dates and numbers in, e.g. en-GB. */
	locale: text('locale').notNull().default('en-GB'),
	createdAt: createdAt()
});

export const users = sqliteTable('users', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	email: text('email').notNull().unique(),
	name: text('name').notNull(),
	role: text('role', { enum: ROLES }).notNull(),
	organisationId: integer('organisation_id')
		.notNull()
		.references(() => organisations.id),
	passwordHash: text('password_hash'),
	active: integer('active', { mode: 'boolean' }).notNull().default(true),
	lastSignInAt: integer('last_sign_in_at', { mode: 'timestamp_ms' }),
	/**
	 * Copied into the session token at sign-in; the request hook refuses a token whose copy
	 * differs. Sign-out, a password reset, a change of role or organisation and deactivation
	 * (of the person or the organisation) raise it, so every older session ends at once.
	 */
	sessionVersion: integer('session_version').notNull().default(0),
	createdAt: createdAt()
});

/**
 * Fixed-window counters for sign-in and reset limits, kept in the database so that every
 * app process on the same database shares them. An attempt claims its slot with one
 * atomic upsert before any password is checked.
 */
export const rateLimits = sqliteTable('rate_limits', {
	key: text('key').primaryKey(),
	windowStart: integer('window_start').notNull(),
	count: integer('count').notNull()
});

/** One-time links: invitations and password resets. Only a hash of the token is stored. */
export const userTokens = sqliteTable('user_tokens', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	userId: integer('user_id')
		.notNull()
		.references(() => users.id),
	purpose: text('purpose', { enum: ['invite', 'reset'] }).notNull(),
	tokenHash: text('token_hash').notNull().unique(),
	expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
	usedAt: integer('used_at', { mode: 'timestamp_ms' }),
	createdAt: createdAt()
});

export const moduleModels = sqliteTable('module_models', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	code: text('code').notNull().unique(),
	name: text('name').notNull(),
	variant: text('variant').notNull(),
	cellsSeries: integer('cells_series').notNull(),
	cellMinV: real('cell_min_v').notNull(),
	cellNominalV: real('cell_nominal_v').notNull(),
	cellMaxV: real('cell_max_v').notNull(),
	ratedAh: real('rated_ah').notNull(),
	usableWh: real('usable_wh').notNull(),
	maxContinuousC: real('max_continuous_c').notNull(),
	burstC: real('burst_c').notNull(),
	burstSeconds: integer('burst_seconds').notNull(),
	chargeTempMinC: real('charge_temp_min_c').notNull(),
	chargeTempMaxC: real('charge_temp_max_c').notNull(),
	dischargeTempMinC: real('discharge_temp_min_c').notNull(),
	dischargeTempMaxC: real('discharge_temp_max_c').notNull(),
	massKg: real('mass_kg').notNull(),
	gtin: text('gtin'),
	minCapacityAh: real('min_capacity_ah').notNull(),
	maxDcirMohm: real('max_dcir_mohm').notNull(),
	maxCellSpreadMv: real('max_cell_spread_mv').notNull(),
	minInsulationMohm: real('min_insulation_mohm').notNull(),
	warrantyYears: integer('warranty_years').notNull(),
	ratedCycles: integer('rated_cycles').notNull(),
	referenceTempC: real('reference_temp_c').notNull(),
	endRetentionPct: real('end_retention_pct').notNull(),
	hotTempC: real('hot_temp_c').notNull(),
	hotRatedCycles: integer('hot_rated_cycles').notNull(),
	/** DC internal resistance of one module, mΩ (data sheet); the bank's fault current follows from it. */
	internalResistanceMohm: real('internal_resistance_mohm'),
	/** What replacing one module under warranty costs, entered by the admin (currency of the books); null until entered. */
	replacementCost: real('replacement_cost'),
	retiredAt: integer('retired_at', { mode: 'timestamp_ms' }),
	createdAt: createdAt()
});

/** Next free running number per (variant, year): serials are never reused or skipped. */
export const serialCounters = sqliteTable(
	'serial_counters',
	{
		variant: text('variant').notNull(),
		year: integer('year').notNull(),
		next: integer('next').notNull()
	},
	(t) => [primaryKey({ columns: [t.variant, t.year] })]
);

export const allocations = sqliteTable('allocations', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	modelId: integer('model_id')
		.notNull()
		.references(() => moduleModels.id),
	firstSerial: text('first_serial').notNull(),
	lastSerial: text('last_serial').notNull(),
	count: integer('count').notNull(),
	createdBy: integer('created_by')
		.notNull()
		.references(() => users.id),
	createdAt: createdAt()
});

export { MODULE_STATES, type ModuleState };

export const modules = sqliteTable(
	'modules',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		serial: text('serial').notNull().unique(),
		modelId: integer('model_id')
			.notNull()
			.references(() => moduleModels.id),
		allocationId: integer('allocation_id').references(() => allocations.id),
		state: text('state', { enum: MODULE_STATES }).notNull().default('allocated'),
		dealerOrgId: integer('dealer_org_id').references(() => organisations.id),
		builtAt: integer('built_at', { mode: 'timestamp_ms' }),
		builtBy: integer('built_by').references(() => users.id),
		/** Cell lot codes as a JSON array, in cell order; module_cell_lots indexes them. */
		cellLots: text('cell_lots'),
		/** Assembly checks confirmed at build, JSON object of check → true. */
		buildChecks: text('build_checks'),
		buildNotes: text('build_notes'),
		testOutcome: text('test_outcome', { enum: ['pass', 'fail'] }),
		testedAt: integer('tested_at', { mode: 'timestamp_ms' }),
		shippedAt: integer('shipped_at', { mode: 'timestamp_ms' }),
		commissionedAt: integer('commissioned_at', { mode: 'timestamp_ms' }),
		/** Warranty registered at commissioning: dates as YYYY-MM-DD and a JSON snapshot of the terms then. */
		warrantyStartsOn: text('warranty_starts_on'),
		warrantyEndsOn: text('warranty_ends_on'),
		warrantyTerms: text('warranty_terms'),
		/** The system the module is installed in (denormalised from system_slots for fast fleet queries). */
		systemId: integer('system_id'),
		/**
		 * A passport status recorded by the lifecycle (Regulation (EU) 2023/1542 Annex XIII §4(c)):
		 * 'remanufactured' after rework of a module that was in service; null means "follow the state".
		 */
		lifecycleStatus: text('lifecycle_status', { enum: PASSPORT_STATUSES }),
		/** Why and when the module was scrapped. */
		scrapReason: text('scrap_reason'),
		scrappedAt: integer('scrapped_at', { mode: 'timestamp_ms' }),
		createdAt: createdAt(),
		updatedAt: integer('updated_at', { mode: 'timestamp_ms' })
	},
	(t) => [
		index('modules_state_idx').on(t.state),
		index('modules_model_idx').on(t.modelId),
		index('modules_dealer_idx').on(t.dealerOrgId),
		// The sort indexes of the fleet table: (date, id) is the table's order exactly (ties by id),
		// and the state and dealer ride along so state and dealer filters (and a dealer's scope)
		// are tested in the index while the page is read in order, no row read until the page's
		// (services/fleet-list.ts; EXPLAIN QUERY PLAN on 200,000 modules: COVERING INDEX). The
		// import's state updates change these indexes anyway (state, tested_at), but the wider
		// entries cost: 100,000 state updates in random order, 4.71 → 5.24 CPU s (median of six
		// runs each, alternated, on the bench fleet). Dropping dealer_org_id from them again
		// breaks nothing: the fleet's plans name the indexes, not their columns.
		index('modules_built_state_idx').on(t.builtAt, t.id, t.state, t.dealerOrgId),
		index('modules_tested_state_idx').on(t.testedAt, t.id, t.state, t.dealerOrgId),
		index('modules_shipped_state_idx').on(t.shippedAt, t.id, t.state, t.dealerOrgId),
		index('modules_system_idx').on(t.systemId),
		index('modules_dealer_state_idx').on(t.dealerOrgId, t.state),
		// State + model filters, read in serial order without a sort (EXPLAIN QUERY PLAN on 200,000 modules).
		index('modules_state_model_serial_idx').on(t.state, t.modelId, t.serial)
	]
);

/**
 * Each module's label QR code, drawn once: the SVG of the payload it encodes. A module's
 * payload changes only when the register's public address does; then it is drawn again.
 */
export const moduleQrCodes = sqliteTable('module_qr_codes', {
	moduleId: integer('module_id')
		.primaryKey()
		.references(() => modules.id),
	payload: text('payload').notNull(),
	svg: text('svg').notNull()
});

export const moduleCellLots = sqliteTable(
	'module_cell_lots',
	{
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		lotCode: text('lot_code').notNull()
	},
	(t) => [
		primaryKey({ columns: [t.moduleId, t.lotCode] }),
		// Covering: a lot's modules are listed from the index alone (trace, fleet filter).
		index('cell_lots_lot_module_idx').on(t.lotCode, t.moduleId)
	]
);

export const EVENT_KINDS = [
	'allocated',
	'label_printed',
	'label_reprinted',
	'built',
	'tested',
	'shipped',
	'installed',
	'commissioned',
	'claim_filed',
	'claim_updated',
	'returned',
	'replaced',
	'service_notice',
	'scrapped',
	'reworked',
	'build_corrected',
	'return_authorised',
	'return_received',
	'return_inspected',
	'kept_for_analysis',
	'campaign'
] as const;
export type EventKind = (typeof EVENT_KINDS)[number];

/** The module's timeline: what happened, who did it, when. */
export const moduleEvents = sqliteTable(
	'module_events',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		kind: text('kind', { enum: EVENT_KINDS }).notNull(),
		at: integer('at', { mode: 'timestamp_ms' }).notNull(),
		actorUserId: integer('actor_user_id').references(() => users.id),
		actorLabel: text('actor_label').notNull(),
		summary: text('summary').notNull(),
		detail: text('detail')
	},
	(t) => [index('module_events_module_idx').on(t.moduleId, t.at)]
);

/** Append-only record of every change (triggers in the migration refuse UPDATE and DELETE). */
export const auditLog = sqliteTable(
	'audit_log',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		at: integer('at', { mode: 'timestamp_ms' }).notNull(),
		actorUserId: integer('actor_user_id'),
		actorLabel: text('actor_label').notNull(),
		action: text('action').notNull(),
		entity: text('entity').notNull(),
		entityId: text('entity_id').notNull(),
		before: text('before'),
		after: text('after')
	},
	(t) => [index('audit_entity_idx').on(t.entity, t.entityId)]
);

/**
 * Leases of scheduled jobs: when two app servers share the database, the one holding a job's
 * unexpired lease runs it and the other skips that round.
 */
export const jobLeases = sqliteTable('job_leases', {
	name: text('name').primaryKey(),
	holder: text('holder').notNull(),
	expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
	lastRunAt: integer('last_run_at', { mode: 'timestamp_ms' })
});

/** Messages kept by the local fake SMTP server (and copies of those sent through real SMTP). */
export const mailOutbox = sqliteTable('mail_outbox', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	at: integer('at', { mode: 'timestamp_ms' }).notNull(),
	fromAddr: text('from_addr').notNull(),
	toAddr: text('to_addr').notNull(),
	subject: text('subject').notNull(),
	text: text('text').notNull(),
	transport: text('transport', { enum: ['fake', 'smtp'] }).notNull()
});

/** Tokens for machines (test rigs): shown once, stored as a SHA-256 hash, limited to a scope. */
export const apiTokens = sqliteTable('api_tokens', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	name: text('name').notNull(),
	tokenHash: text('token_hash').notNull().unique(),
	/** First characters of the token, so people can tell tokens apart without the secret. */
	prefix: text('prefix').notNull(),
	scope: text('scope', { enum: ['imports'] }).notNull(),
	createdBy: integer('created_by')
		.notNull()
		.references(() => users.id),
	createdAt: createdAt(),
	lastUsedAt: integer('last_used_at', { mode: 'timestamp_ms' }),
	revokedAt: integer('revoked_at', { mode: 'timestamp_ms' })
});

/** One uploaded rig file: its preview counts, then its commit. */
export const imports = sqliteTable(
	'imports',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		kind: text('kind', { enum: ['factory_tests'] }).notNull(),
		sha256: text('sha256').notNull(),
		fileName: text('file_name').notNull(),
		bytes: integer('bytes').notNull(),
		uploadedBy: integer('uploaded_by').references(() => users.id),
		tokenId: integer('token_id').references(() => apiTokens.id),
		uploaderLabel: text('uploader_label').notNull(),
		createdAt: createdAt(),
		status: text('status', { enum: ['previewed', 'committed'] }).notNull(),
		rowsTotal: integer('rows_total').notNull(),
		accepted: integer('accepted').notNull(),
		rejected: integer('rejected').notNull(),
		duplicates: integer('duplicates').notNull(),
		passed: integer('passed'),
		failed: integer('failed'),
		/** Rejected rows as JSON [{row, column, message}]. */
		errors: text('errors').notNull(),
		committedAt: integer('committed_at', { mode: 'timestamp_ms' })
	},
	(t) => [uniqueIndex('imports_sha_idx').on(t.kind, t.sha256)]
);

/** The uploaded file itself, kept until (and after) commit so the commit re-reads exactly what was previewed. */
export const importFiles = sqliteTable('import_files', {
	importId: integer('import_id')
		.primaryKey()
		.references(() => imports.id),
	/** The file's text; '' when it is kept compressed in `contentGzip`. */
	content: text('content').notNull(),
	/** The file's UTF-8 bytes, gzip-compressed (RFC 1952), for files stored since compression. */
	contentGzip: blob('content_gzip', { mode: 'buffer' }),
	/** Until commit: the accepted rows as insert-ready JSON and each module's latest result (see import-analysis). */
	planRows: text('plan_rows'),
	planStates: text('plan_states')
});

/**
 * A previewed import's commit plan, in slices of about a thousand rows, written while the
 * file is read (keyed by `planKey` until the import row exists) and deleted as the commit
 * stores each slice: the commit runs short statements, not one of 100,000 rows.
 */
export const importPlanChunks = sqliteTable(
	'import_plan_chunks',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		planKey: text('plan_key').notNull(),
		importId: integer('import_id').references(() => imports.id),
		seq: integer('seq').notNull(),
		/** Insert-ready JSON arrays of accepted rows (see import-analysis). */
		rows: text('rows').notNull(),
		/** JSON [module id, outcome, tested at] of each module's latest result in this slice. */
		states: text('states').notNull(),
		createdAt: createdAt()
	},
	(t) => [
		index('import_plan_chunks_import_idx').on(t.importId, t.seq),
		index('import_plan_chunks_key_idx').on(t.planKey)
	]
);

export const factoryTests = sqliteTable(
	'factory_tests',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		importId: integer('import_id').references(() => imports.id),
		/** serial + tested_at + rig: the same measurement sent twice is recognised. */
		rowKey: text('row_key').notNull().unique(),
		testedAt: integer('tested_at', { mode: 'timestamp_ms' }).notNull(),
		capacityAh: real('capacity_ah').notNull(),
		energyWh: real('energy_wh'),
		dcirMohm: real('dcir_mohm').notNull(),
		dcirSource: text('dcir_source', { enum: ['measured', 'two_pulse'] }).notNull(),
		ocvV: real('ocv_v'),
		cellSpreadMv: real('cell_spread_mv').notNull(),
		insulationMohm: real('insulation_mohm').notNull(),
		ambientC: real('ambient_c'),
		rig: text('rig'),
		operator: text('operator'),
		outcome: text('outcome', { enum: ['pass', 'fail'] }).notNull(),
		/** Failed checks as JSON [{check, message}]; empty for a pass. */
		failures: text('failures').notNull()
	},
	(t) => [
		index('factory_tests_module_idx').on(t.moduleId, t.testedAt),
		// Covering: an import's modules are listed from the index alone (fleet filter).
		index('factory_tests_import_module_idx').on(t.importId, t.moduleId),
		index('factory_tests_time_idx').on(t.testedAt)
	]
);

export const shipments = sqliteTable(
	'shipments',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		/** Human reference printed on the packing list, e.g. SH-2026-0042. */
		reference: text('reference').notNull().unique(),
		dealerOrgId: integer('dealer_org_id')
			.notNull()
			.references(() => organisations.id),
		status: text('status', { enum: ['draft', 'dispatched'] })
			.notNull()
			.default('draft'),
		note: text('note'),
		createdBy: integer('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: createdAt(),
		dispatchedAt: integer('dispatched_at', { mode: 'timestamp_ms' }),
		dispatchedBy: integer('dispatched_by').references(() => users.id)
	},
	(t) => [index('shipments_dealer_idx').on(t.dealerOrgId)]
);

export const shipmentItems = sqliteTable(
	'shipment_items',
	{
		shipmentId: integer('shipment_id')
			.notNull()
			.references(() => shipments.id),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		addedAt: createdAt()
	},
	(t) => [
		primaryKey({ columns: [t.shipmentId, t.moduleId] }),
		index('shipment_items_module_idx').on(t.moduleId)
	]
);

/**
 * Main climate groups of the Köppen–Geiger classification (tropical, arid, temperate,
 * continental, polar): a site's climate band, for slicing the fleet's reliability.
 */
export const CLIMATE_BANDS = ['tropical', 'arid', 'temperate', 'continental', 'polar'] as const;
export type ClimateBand = (typeof CLIMATE_BANDS)[number];

export const SITE_APPLICATIONS = [
	'off_grid_home',
	'backup',
	'ups',
	'workshop',
	'telecom',
	'other'
] as const;

/** A place where systems are installed. Owner name and contact are personal data: the site's dealer and the assembler's staff only. */
export const sites = sqliteTable(
	'sites',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		/** The dealer responsible for the site; null when the assembler's own technicians installed it. */
		dealerOrgId: integer('dealer_org_id').references(() => organisations.id),
		name: text('name').notNull(),
		ownerName: text('owner_name').notNull(),
		ownerContact: text('owner_contact').notNull(),
		address: text('address').notNull(),
		application: text('application', { enum: SITE_APPLICATIONS }).notNull(),
		/** Köppen–Geiger main group of the site's climate; null when not recorded. */
		climateBand: text('climate_band', { enum: CLIMATE_BANDS }),
		createdBy: integer('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: createdAt()
	},
	(t) => [index('sites_dealer_idx').on(t.dealerOrgId)]
);

export const systems = sqliteTable(
	'systems',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		siteId: integer('site_id')
			.notNull()
			.references(() => sites.id),
		name: text('name').notNull(),
		modelId: integer('model_id')
			.notNull()
			.references(() => moduleModels.id),
		series: integer('series').notNull(),
		parallel: integer('parallel').notNull(),
		inverterName: text('inverter_name'),
		inverterMinV: real('inverter_min_v').notNull(),
		inverterMaxV: real('inverter_max_v').notNull(),
		preferredMinV: real('preferred_min_v'),
		preferredMaxV: real('preferred_max_v'),
		maxChargeA: real('max_charge_a'),
		maxDischargeA: real('max_discharge_a'),
		status: text('status', { enum: ['planned', 'commissioned'] })
			.notNull()
			.default('planned'),
		createdAt: createdAt()
	},
	(t) => [index('systems_site_idx').on(t.siteId)]
);

/** Where each module sits in a system: string (1-based) and position in the string (1-based). */
export const systemSlots = sqliteTable(
	'system_slots',
	{
		systemId: integer('system_id')
			.notNull()
			.references(() => systems.id),
		stringNo: integer('string_no').notNull(),
		position: integer('position').notNull(),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id)
	},
	(t) => [
		primaryKey({ columns: [t.systemId, t.stringNo, t.position] }),
		uniqueIndex('system_slots_module_idx').on(t.moduleId)
	]
);

/** Small per-user settings, e.g. the fleet table's chosen columns. */
export const userPrefs = sqliteTable(
	'user_prefs',
	{
		userId: integer('user_id')
			.notNull()
			.references(() => users.id),
		key: text('key').notNull(),
		value: text('value').notNull()
	},
	(t) => [primaryKey({ columns: [t.userId, t.key] })]
);

/** One commissioning attempt of a system: what was measured, how each item was judged, who signed. */
export const commissionings = sqliteTable(
	'commissionings',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		systemId: integer('system_id')
			.notNull()
			.references(() => systems.id),
		/** Certificate number, given only to a passing commissioning (e.g. PLC-2026-00012). */
		certificateNo: text('certificate_no').unique(),
		overall: text('overall', { enum: ['pass', 'fail', 'incomplete'] }).notNull(),
		technicianUserId: integer('technician_user_id')
			.notNull()
			.references(() => users.id),
		technicianName: text('technician_name').notNull(),
		licenceNumber: text('licence_number').notNull(),
		/** The measurements as entered (JSON) and the evaluated items (JSON), kept for decades. */
		measurements: text('measurements').notNull(),
		items: text('items').notNull(),
		handoverName: text('handover_name'),
		commissionedOn: text('commissioned_on').notNull(),
		/** The rule set (and its version) the checklist was judged by. */
		ruleSetId: integer('rule_set_id').references(() => commissioningRuleSets.id),
		ruleSetVersion: integer('rule_set_version'),
		/** Signatures drawn on the phone: JSON { w, h, strokes: [[x, y], …][] } in canvas pixels. */
		technicianSignature: text('technician_signature'),
		ownerSignature: text('owner_signature'),
		/** SHA-256 (hex) of the certificate's canonical content (RFC 8785 JSON), fixed at issue. */
		contentHash: text('content_hash'),
		createdAt: createdAt()
	},
	(t) => [index('commissionings_system_idx').on(t.systemId)]
);

/**
 * A commissioning rule set of a market: limits and the text each verdict cites. Never
 * changed in place: an edit adds the next version, so every commissioning keeps the
 * version it was judged by.
 */
export const commissioningRuleSets = sqliteTable(
	'commissioning_rule_sets',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		market: text('market').notNull(),
		name: text('name').notNull(),
		version: integer('version').notNull(),
		/** ISO calendar day from which this version applies. */
		effectiveFrom: text('effective_from').notNull(),
		/** JSON CommissioningLimits and CommissioningCitations (src/lib/domain/commissioning.ts). */
		limits: text('limits').notNull(),
		citations: text('citations').notNull(),
		createdBy: integer('created_by').references(() => users.id),
		createdAt: createdAt()
	},
	(t) => [uniqueIndex('rule_sets_market_version_uq').on(t.market, t.version)]
);

/** Files attached to records (commissioning photos, claim evidence), stored through the storage module. */
export const attachments = sqliteTable(
	'attachments',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		/** What the file belongs to, e.g. 'system' / 'commissioning' / 'claim', and that record's id. */
		ownerKind: text('owner_kind').notNull(),
		ownerId: integer('owner_id').notNull(),
		storageKey: text('storage_key').notNull().unique(),
		fileName: text('file_name').notNull(),
		contentType: text('content_type').notNull(),
		bytes: integer('bytes').notNull(),
		sha256: text('sha256').notNull(),
		caption: text('caption'),
		uploadedBy: integer('uploaded_by')
			.notNull()
			.references(() => users.id),
		createdAt: createdAt()
	},
	(t) => [index('attachments_owner_idx').on(t.ownerKind, t.ownerId)]
);

export { CLAIM_STATES, type ClaimState };

/** A warranty claim on one or more modules of a commissioned system. */
export const claims = sqliteTable(
	'claims',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		reference: text('reference').notNull().unique(),
		/** In service (a commissioned system) or on delivery (shipped, not installed: no system). */
		kind: text('kind', { enum: CLAIM_KINDS }).notNull().default('in-service'),
		systemId: integer('system_id').references(() => systems.id),
		/** The dealer organisation the claim belongs to (null for the assembler's own sites). */
		dealerOrgId: integer('dealer_org_id').references(() => organisations.id),
		state: text('state', { enum: CLAIM_STATES }).notNull().default('filed'),
		fault: text('fault').notNull(),
		/** The fault from the list of faults (CLAIM_FAULTS); null on claims filed before the list. */
		faultCode: text('fault_code'),
		/** The calendar day the fault was first seen, as YYYY-MM-DD. */
		observedOn: text('observed_on'),
		/** What the officer asked the dealer for, while the claim waits for evidence. */
		evidenceRequest: text('evidence_request'),
		evidenceRequestedAt: integer('evidence_requested_at', { mode: 'timestamp_ms' }),
		/** Evidence as JSON: measured capacity and its temperature, throughput or cycles, temperatures, events. */
		evidence: text('evidence').notNull(),
		/** The assessment computed when the claim was decided (JSON), kept for later reading. */
		assessment: text('assessment'),
		decision: text('decision', { enum: CLAIM_DECISIONS }),
		decisionReason: text('decision_reason'),
		decidedBy: integer('decided_by').references(() => users.id),
		decidedAt: integer('decided_at', { mode: 'timestamp_ms' }),
		filedBy: integer('filed_by')
			.notNull()
			.references(() => users.id),
		filedAt: integer('filed_at', { mode: 'timestamp_ms' }).notNull(),
		updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull()
	},
	(t) => [index('claims_state_idx').on(t.state), index('claims_dealer_idx').on(t.dealerOrgId)]
);

export const claimModules = sqliteTable(
	'claim_modules',
	{
		claimId: integer('claim_id')
			.notNull()
			.references(() => claims.id),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		replacementModuleId: integer('replacement_module_id').references(() => modules.id),
		returnFindings: text('return_findings'),
		returnCause: text('return_cause'),
		/** Return authorisation number, given when the replacement is approved (recorded). */
		raNumber: text('ra_number').unique(),
		receivedAt: integer('received_at', { mode: 'timestamp_ms' }),
		receivedBy: integer('received_by').references(() => users.id),
		arrivalCondition: text('arrival_condition'),
		inspectedAt: integer('inspected_at', { mode: 'timestamp_ms' }),
		inspectedBy: integer('inspected_by').references(() => users.id),
		returnOutcome: text('return_outcome', { enum: RETURN_OUTCOMES }),
		returnOutcomeAt: integer('return_outcome_at', { mode: 'timestamp_ms' })
	},
	(t) => [
		primaryKey({ columns: [t.claimId, t.moduleId] }),
		index('claim_modules_module_idx').on(t.moduleId)
	]
);

/** Every change of a claim's state: who, when, from what to what, and why. */
export const claimEvents = sqliteTable(
	'claim_events',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		claimId: integer('claim_id')
			.notNull()
			.references(() => claims.id),
		at: integer('at', { mode: 'timestamp_ms' }).notNull(),
		actorUserId: integer('actor_user_id').references(() => users.id),
		actorLabel: text('actor_label').notNull(),
		fromState: text('from_state'),
		toState: text('to_state').notNull(),
		comment: text('comment')
	},
	(t) => [index('claim_events_claim_idx').on(t.claimId)]
);

/** How a dealer's inverter log columns map to throughput and temperature, remembered once mapped. */
export const logMappings = sqliteTable('log_mappings', {
	dealerOrgId: integer('dealer_org_id')
		.primaryKey()
		.references(() => organisations.id),
	mapping: text('mapping').notNull(),
	updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull()
});

/**
 * Battery passport items of a model that the admin enters (Regulation (EU) 2023/1542,
 * Annex XIII §1): one row per item, its value as entered (JSON) and the unit it was
 * entered in. An item without a row is "not yet provided"; nothing is filled in for it.
 */
export const modelPassportItems = sqliteTable(
	'model_passport_items',
	{
		modelId: integer('model_id')
			.notNull()
			.references(() => moduleModels.id),
		itemKey: text('item_key').notNull(),
		value: text('value').notNull(),
		unit: text('unit'),
		updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull(),
		updatedBy: integer('updated_by').references(() => users.id)
	},
	(t) => [primaryKey({ columns: [t.modelId, t.itemKey] })]
);

export const PASSPORT_GRANT_PARTIES = ['recycler', 'repairer', 'authority'] as const;

/**
 * A time-limited access link to the restricted part of battery passports, issued by the
 * admin to a recycler, repairer or market-surveillance authority for one module or one
 * cell lot. Only a hash of the secret is stored; revoking ends it at once.
 */
export const passportGrants = sqliteTable(
	'passport_grants',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		tokenHash: text('token_hash').notNull().unique(),
		prefix: text('prefix').notNull(),
		partyKind: text('party_kind', { enum: PASSPORT_GRANT_PARTIES }).notNull(),
		partyName: text('party_name').notNull(),
		scopeKind: text('scope_kind', { enum: ['module', 'lot'] }).notNull(),
		/** The module's serial or the cell lot code. */
		scopeValue: text('scope_value').notNull(),
		expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
		createdBy: integer('created_by')
			.notNull()
			.references(() => users.id),
		createdAt: createdAt(),
		revokedAt: integer('revoked_at', { mode: 'timestamp_ms' }),
		lastUsedAt: integer('last_used_at', { mode: 'timestamp_ms' })
	},
	(t) => [index('passport_grants_scope_idx').on(t.scopeKind, t.scopeValue)]
);

/**
 * A service campaign (recall): a notice to the dealers of the affected modules, a remedy,
 * and each module followed to an outcome.
 */
export const campaigns = sqliteTable('campaigns', {
	id: integer('id').primaryKey({ autoIncrement: true }),
	reference: text('reference').notNull().unique(),
	title: text('title').notNull(),
	notice: text('notice').notNull(),
	remedy: text('remedy').notNull(),
	/** How the modules were chosen (JSON: serials, lot, model, builtFrom, builtTo, importId). */
	selection: text('selection').notNull(),
	/** Remind dealers with open modules after this many days without a step. */
	reminderDays: integer('reminder_days').notNull().default(14),
	createdBy: integer('created_by')
		.notNull()
		.references(() => users.id),
	createdAt: createdAt(),
	closedAt: integer('closed_at', { mode: 'timestamp_ms' })
});

/** One affected module of a campaign, with its dealer when the campaign opened and its current step. */
export const campaignModules = sqliteTable(
	'campaign_modules',
	{
		campaignId: integer('campaign_id')
			.notNull()
			.references(() => campaigns.id),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		/** Null: still with the assembler (its own staff follow it up). */
		dealerOrgId: integer('dealer_org_id').references(() => organisations.id),
		state: text('state', { enum: CAMPAIGN_ITEM_STATES }).notNull().default('notified'),
		outcome: text('outcome', { enum: CAMPAIGN_OUTCOMES }),
		note: text('note'),
		notifiedAt: integer('notified_at', { mode: 'timestamp_ms' }).notNull(),
		lastStepAt: integer('last_step_at', { mode: 'timestamp_ms' }).notNull(),
		lastStepBy: text('last_step_by').notNull(),
		lastReminderAt: integer('last_reminder_at', { mode: 'timestamp_ms' })
	},
	(t) => [
		primaryKey({ columns: [t.campaignId, t.moduleId] }),
		index('campaign_modules_dealer_idx').on(t.campaignId, t.dealerOrgId),
		index('campaign_modules_module_idx').on(t.moduleId)
	]
);

/** Every step of a campaign's module: who, when, what (append-only). */
export const campaignSteps = sqliteTable(
	'campaign_steps',
	{
		id: integer('id').primaryKey({ autoIncrement: true }),
		campaignId: integer('campaign_id')
			.notNull()
			.references(() => campaigns.id),
		moduleId: integer('module_id')
			.notNull()
			.references(() => modules.id),
		action: text('action', { enum: CAMPAIGN_ACTIONS }).notNull(),
		outcome: text('outcome', { enum: CAMPAIGN_OUTCOMES }),
		note: text('note'),
		actorUserId: integer('actor_user_id').references(() => users.id),
		actorLabel: text('actor_label').notNull(),
		at: integer('at', { mode: 'timestamp_ms' }).notNull()
	},
	(t) => [index('campaign_steps_item_idx').on(t.campaignId, t.moduleId)]
);

/**
 * Operations sent by phones that worked offline (`POST /api/sync`), recorded in the same
 * transaction as the write they caused, so a replayed operation id is answered from here
 * and stores nothing twice. Only applied operations are kept; a rejected one may be sent again.
 */
export const syncOperations = sqliteTable(
	'sync_operations',
	{
		/** The client-made UUID of the operation. */
		id: text('id').primaryKey(),
		userId: integer('user_id')
			.notNull()
			.references(() => users.id),
		type: text('type').notNull(),
		/** What the write made: a site, system, commissioning or attachment id, or a module serial. */
		ref: text('ref').notNull(),
		createdAt: createdAt()
	},
	(t) => [index('sync_operations_user_idx').on(t.userId)]
);
