/**
 * The fleet table's inputs: the view in the URL (`/fleet?…`, `/api/modules?…`,
 * `/api/modules/export.csv?…`) and the columns a person chose to see. Imported by the
 * page as well as the server, so only types come from the database schema.
 */
import { z } from 'zod';
import { calendarDate } from './fields';
import type { ModuleState } from '$lib/server/db/schema';

/** Every module state, in the order of a module's life (the Record keeps it in step with the table's list). */
const STATE_ORDER: Record<ModuleState, number> = {
	allocated: 0,
	built: 1,
	test_failed: 2,
	in_stock: 3,
	shipped: 4,
	installed: 5,
	commissioned: 6,
	claim_open: 7,
	returned: 8,
	received_back: 9,
	inspected: 10,
	kept_for_analysis: 11,
	replaced: 12,
	scrapped: 13
};

/** Rows a page of the fleet (page and `GET /api/modules`) may hold; README documents the range. */
export const PAGE_SIZE_MIN = 1;
export const PAGE_SIZE_MAX = 500;
export const FLEET_STATES = Object.keys(STATE_ORDER) as ModuleState[];

export const FLEET_SORTS = [
	'serial',
	'model',
	'state',
	'dealer',
	'builtAt',
	'testedAt',
	'shippedAt'
] as const;
export type FleetSort = (typeof FLEET_SORTS)[number];

/** Columns of the table and of the CSV export, with the words on screen. `serial` is always shown. */
export const FLEET_COLUMNS = [
	{ id: 'serial', label: 'Serial' },
	{ id: 'model', label: 'Model' },
	{ id: 'state', label: 'State' },
	{ id: 'dealer', label: 'Dealer' },
	{ id: 'builtAt', label: 'Built' },
	{ id: 'testedAt', label: 'Tested' },
	{ id: 'testOutcome', label: 'Test result' },
	{ id: 'shippedAt', label: 'Shipped' },
	{ id: 'cellLots', label: 'Cell lots' },
	{ id: 'site', label: 'Site' }
] as const;
export type FleetColumn = (typeof FLEET_COLUMNS)[number]['id'];
export const FLEET_COLUMN_IDS = FLEET_COLUMNS.map((c) => c.id) as [FleetColumn, ...FleetColumn[]];
/** Shown until a person chooses: all but the cell lots, which make rows tall. */
export const DEFAULT_FLEET_COLUMNS: FleetColumn[] = FLEET_COLUMN_IDS.filter(
	(c) => c !== 'cellLots'
);

export const FLEET_PAGE_SIZES = [25, 50, 100, 200] as const;

const day = calendarDate('The date');
const id = (message: string) => z.coerce.number({ message }).int(message).positive(message);

export const fleetQuerySchema = z
	.object({
		page: z.coerce
			.number({ message: 'The page is a number from 1 up.' })
			.int('The page is a whole number.')
			.min(1, 'Pages start at 1.')
			.default(1),
		pageSize: z.coerce
			.number({ message: `Show ${PAGE_SIZE_MIN} to ${PAGE_SIZE_MAX} rows a page.` })
			.int(`Show ${PAGE_SIZE_MIN} to ${PAGE_SIZE_MAX} rows a page.`)
			.min(PAGE_SIZE_MIN, `Show at least ${PAGE_SIZE_MIN} row a page.`)
			.max(PAGE_SIZE_MAX, `Show at most ${PAGE_SIZE_MAX} rows a page.`)
			.default(50),
		sort: z
			.enum(FLEET_SORTS, { message: `Sort by one of: ${FLEET_SORTS.join(', ')}.` })
			.default('builtAt'),
		dir: z.enum(['asc', 'desc'], { message: 'The direction is asc or desc.' }).default('desc'),
		state: z
			.enum(FLEET_STATES as [ModuleState, ...ModuleState[]], {
				message: `The state is one of: ${FLEET_STATES.join(', ')}.`
			})
			.optional(),
		model: z.string().trim().min(1).max(40, 'A model code has at most 40 characters.').optional(),
		dealer: id('Choose a dealer from the list.').optional(),
		builtFrom: day.optional(),
		builtTo: day.optional(),
		lot: z.string().trim().min(1).max(60, 'A cell lot code has at most 60 characters.').optional(),
		importId: id('An import is known by its number, e.g. 12 (see Test imports).').optional(),
		q: z.string().trim().max(40, 'Search with at most 40 characters of a serial.').optional()
	})
	.refine((v) => !v.builtFrom || !v.builtTo || v.builtFrom <= v.builtTo, {
		message: 'The “built to” date is before the “built from” date.',
		path: ['builtTo']
	});
export type FleetQuery = z.infer<typeof fleetQuerySchema>;

/** Reads the view from URL search parameters; an empty parameter (`?state=`) means "no filter". */
export function parseFleetQuery(params: URLSearchParams) {
	const raw: Record<string, string> = {};
	for (const [k, v] of params) if (v.trim() !== '') raw[k] = v;
	return fleetQuerySchema.safeParse(raw);
}

/** The view as search parameters, leaving out defaults so shared links stay short. */
export function fleetSearch(
	query: Partial<Record<keyof FleetQuery, string | number | undefined>>
): URLSearchParams {
	const defaults: Record<string, string> = {
		page: '1',
		pageSize: '50',
		sort: 'builtAt',
		dir: 'desc'
	};
	const out = new URLSearchParams();
	for (const [k, v] of Object.entries(query)) {
		if (v === undefined || v === '' || defaults[k] === String(v)) continue;
		out.set(k, String(v));
	}
	return out;
}

export const fleetColumnsSchema = z.object({
	columns: z
		.array(
			z.enum(FLEET_COLUMN_IDS, { message: `A column is one of: ${FLEET_COLUMN_IDS.join(', ')}.` }),
			{ message: 'Send the visible columns as a list.' }
		)
		.max(FLEET_COLUMN_IDS.length)
});

/** Position of each state in a module's life, for sorting by state. */
export const stateRank = (s: ModuleState) => STATE_ORDER[s];

/** A refused view as an API answers it: a message naming each setting, and the issues. */
export function fleetQueryProblem(error: z.ZodError) {
	const issues = error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
	const named = issues.map((i) => `${i.path || 'address'}: ${i.message}`).join(' ');
	return {
		message: `Some settings of this view are not valid. ${named} Change them, or open the fleet page without them.`,
		issues
	};
}
