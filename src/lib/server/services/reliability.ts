import { sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { calendarDay } from '$lib/domain/calendar';
import { assemblerCalendar } from './calendar';
import type { Actor } from '$lib/server/actor';
import { dealerScopeOf } from '$lib/server/actor';
import {
	sliceFleet,
	summariseFleet,
	type ServiceRecord,
	type SliceRow
} from '$lib/domain/reliability';
import {
	SLICE_DIMENSIONS,
	SLICE_LABELS,
	type ReliabilityQuery,
	type SliceDimension
} from '$lib/schemas/reliability';

/** An instant's calendar day, 'YYYY-MM-DD', in the zone given. */
type DayOf = (d: Date) => string;

type Row = {
	id: number;
	model: string;
	cost: number | null;
	dealer: string | null;
	builtAt: number | null;
	commissionedAt: number;
	warrantyEndsOn: string | null;
	leftAt: number | null;
	application: string | null;
	climate: string | null;
	/** Nested JSON arrays arrive parsed; kept tolerant of a driver that sends them as text. */
	lots: string[] | string | null;
	claims: { at: number; decision: string | null }[] | string | null;
};

const arrayOf = <T>(v: T[] | string | null): T[] =>
	v === null ? [] : typeof v === 'string' ? (JSON.parse(v) as T[]) : v;

/**
 * Every module that has been in service, with what the fleet summary needs, in one query
 * answered as one JSON array (libSQL materialises a JSON string far faster than rows).
 * A module taken out for a claim loses its system, so its site is found through the claim.
 */
async function loadRecords(db: Db, dealerScope: number | null): Promise<Row[]> {
	const scope = dealerScope === null ? sql`` : sql`AND m.dealer_org_id = ${dealerScope}`;
	const res = await db.all<{ j: string | null }>(sql`
		SELECT json_group_array(json_object(
			'id', m.id, 'model', mm.code, 'cost', mm.replacement_cost, 'dealer', o.name,
			'builtAt', m.built_at, 'commissionedAt', m.commissioned_at,
			'warrantyEndsOn', m.warranty_ends_on,
			'leftAt', (SELECT min(e.at) FROM module_events e
				WHERE e.module_id = m.id AND e.kind IN ('returned', 'scrapped') AND e.at >= m.commissioned_at),
			'application', s.application, 'climate', s.climate_band,
			'lots', (SELECT json_group_array(l.lot_code) FROM module_cell_lots l WHERE l.module_id = m.id),
			'claims', (SELECT json_group_array(json_object('at', c.filed_at, 'decision', c.decision))
				FROM claim_modules cm JOIN claims c ON c.id = cm.claim_id WHERE cm.module_id = m.id)
		)) AS j
		FROM modules m
		JOIN module_models mm ON mm.id = m.model_id
		LEFT JOIN organisations o ON o.id = m.dealer_org_id
		LEFT JOIN systems sy ON sy.id = coalesce(m.system_id, (SELECT c.system_id FROM claim_modules cm
			JOIN claims c ON c.id = cm.claim_id WHERE cm.module_id = m.id ORDER BY c.filed_at LIMIT 1))
		LEFT JOIN sites s ON s.id = sy.site_id
		WHERE m.commissioned_at IS NOT NULL ${scope}`);
	return JSON.parse(res[0]?.j ?? '[]') as Row[];
}

/** A module's service record; business days (service start, build month) are `day`'s. */
function toRecord(r: Row, day: DayOf): ServiceRecord {
	const lots = arrayOf(r.lots);
	const claims = arrayOf(r.claims);
	return {
		inServiceFrom: day(new Date(r.commissionedAt)),
		leftServiceOn: r.leftAt === null ? null : day(new Date(r.leftAt)),
		warrantyEndsOn: r.warrantyEndsOn,
		replacementCost: r.cost,
		claims: claims.map((c) => ({
			filedOn: day(new Date(c.at)),
			covered: c.decision === 'covered',
			decided: c.decision !== null
		})),
		keys: {
			model: r.model,
			lot: lots,
			buildMonth: r.builtAt === null ? '(not recorded)' : day(new Date(r.builtAt)).slice(0, 7),
			dealer: r.dealer ?? 'Own installations',
			application: r.application ?? '(not recorded)',
			climate: r.climate ?? '(not recorded)'
		}
	};
}

const FILTERS: [keyof ReliabilityQuery, SliceDimension][] = [
	['model', 'model'],
	['lot', 'lot'],
	['buildMonth', 'buildMonth'],
	['dealer', 'dealer'],
	['application', 'application'],
	['climate', 'climate']
];

const matches = (rec: ServiceRecord, dim: SliceDimension, want: string) => {
	const v = rec.keys?.[dim];
	return typeof v === 'string' ? v === want : (v ?? []).includes(want);
};

export type ReliabilityReport = ReturnType<typeof summariseFleet> & {
	filters: Partial<Record<SliceDimension, string>>;
	by: SliceDimension | null;
	slices: (SliceRow & { dimension: SliceDimension })[];
	/** Values each filter can take in the whole fleet, for the page's selects. */
	options: Record<SliceDimension, string[]>;
	dimensions: { key: SliceDimension; label: string }[];
};

/**
 * The fleet's reliability as of a day: units in service, unit-years, claims, the claim rate
 * with its exact interval, the Weibull life model and the warranty reserve, for the modules
 * matching the filters; with `by`, the same rates per slice. A dealer-scoped actor only ever
 * sees the own organisation's modules (the page and API are for the assembler's staff).
 */
export async function reliabilityReport(
	db: Db,
	actor: Actor,
	q: ReliabilityQuery,
	now = new Date()
): Promise<ReliabilityReport> {
	// Business days are the assembler's calendar days, in the zone its organisation sets.
	const { timeZone } = await assemblerCalendar(db);
	const day: DayOf = (d) => calendarDay(d, timeZone);
	const asOf = q.asOf ?? day(now);
	const all = (await loadRecords(db, dealerScopeOf(actor))).map((r) => toRecord(r, day));
	const filters: Partial<Record<SliceDimension, string>> = {};
	for (const [field, dim] of FILTERS) {
		const want = q[field];
		if (typeof want === 'string' && want) filters[dim] = want;
	}
	const selected = all.filter((r) =>
		Object.entries(filters).every(([dim, want]) => matches(r, dim as SliceDimension, want))
	);
	const summary = summariseFleet(selected, asOf, q.basis);
	let slices: ReliabilityReport['slices'] = [];
	if (q.by) {
		const fit = summary.weibull.beta === null ? null : summary.weibull;
		slices = sliceFleet(selected, q.by, asOf, q.basis, fit).map((s) => ({
			...s,
			dimension: q.by!
		}));
	}
	const options = Object.fromEntries(
		SLICE_DIMENSIONS.map((dim) => {
			const values = new Set<string>();
			for (const r of all) {
				const v = r.keys?.[dim];
				for (const x of typeof v === 'string' ? [v] : (v ?? [])) values.add(x);
			}
			return [dim, [...values].sort()];
		})
	) as Record<SliceDimension, string[]>;
	return {
		...summary,
		filters,
		by: q.by ?? null,
		slices,
		options,
		dimensions: SLICE_DIMENSIONS.map((key) => ({ key, label: SLICE_LABELS[key] }))
	};
}
