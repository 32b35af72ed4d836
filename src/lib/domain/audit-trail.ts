/**
 * Reading the audit trail: which fields an entry changed, and where its record lives.
 * Pure; the stored before/after values are JSON text written by `recordAudit`.
 */

export interface FieldChange {
	/** Dotted path of the field, e.g. `limits.minCapacityAh`. */
	field: string;
	before: string;
	after: string;
}

/** Longest value shown for one field; the full JSON stays in the stored entry and the CSV. */
const MAX_VALUE_CHARS = 200;
/** Nesting followed into objects; deeper values are compared whole. */
const MAX_DEPTH = 3;
/** Most fields listed for one entry. */
const MAX_FIELDS = 60;

function parse(text: string | null | undefined): unknown {
	if (text == null || text === '') return undefined;
	try {
		return JSON.parse(text);
	} catch {
		return text;
	}
}

const isPlainObject = (v: unknown): v is Record<string, unknown> =>
	typeof v === 'object' && v !== null && !Array.isArray(v);

/** A value as a person reads it: text without quotes, absent as an em dash. */
export function showValue(v: unknown): string {
	if (v === undefined || v === null || v === '') return '—';
	if (typeof v === 'boolean') return v ? 'yes' : 'no';
	const s = typeof v === 'string' ? v : JSON.stringify(v);
	return s.length > MAX_VALUE_CHARS ? `${s.slice(0, MAX_VALUE_CHARS - 1)}…` : s;
}

function flatten(v: unknown, prefix: string, depth: number, out: Map<string, unknown>) {
	if (isPlainObject(v) && depth < MAX_DEPTH) {
		for (const [k, child] of Object.entries(v)) {
			flatten(child, prefix ? `${prefix}.${k}` : k, depth + 1, out);
		}
		return;
	}
	out.set(prefix || 'value', v);
}

const same = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);

/**
 * The fields an audit entry changed, in the order they appear (before's fields first).
 * A creation lists every field of `after`; a removal every field of `before`.
 */
export function changedFields(
	beforeJson: string | null | undefined,
	afterJson: string | null | undefined
): { changes: FieldChange[]; more: number } {
	const before = new Map<string, unknown>();
	const after = new Map<string, unknown>();
	flatten(parse(beforeJson), '', 0, before);
	flatten(parse(afterJson), '', 0, after);
	const keys = [...new Set([...before.keys(), ...after.keys()])];
	const changes: FieldChange[] = [];
	let more = 0;
	for (const key of keys) {
		const b = before.get(key);
		const a = after.get(key);
		if (same(b, a)) continue;
		if (changes.length >= MAX_FIELDS) {
			more++;
			continue;
		}
		changes.push({ field: key, before: showValue(b), after: showValue(a) });
	}
	return { changes, more };
}

/**
 * Where the record an entry is about can be opened, if it has a page. Claims and shipments
 * are audited by their reference (`CL-2026-0001`); `ids` maps such a reference to the
 * record's numeric id, looked up by the caller.
 */
export function recordHref(
	entity: string,
	entityId: string,
	ids: ReadonlyMap<string, number> = new Map()
): string | null {
	const numeric = /^\d{1,12}$/.test(entityId);
	const byRef = ids.get(`${entity}:${entityId}`);
	const id = numeric ? entityId : byRef !== undefined ? String(byRef) : null;
	switch (entity) {
		case 'module':
			return `/m/${encodeURIComponent(entityId)}`;
		case 'claim':
			return id ? `/claims/${id}` : null;
		case 'shipment':
			return id ? `/shipments/${id}` : null;
		case 'site':
			return id ? `/sites/${id}` : null;
		case 'system':
			return id ? `/systems/${id}` : null;
		case 'allocation':
			return id ? `/allocations/${id}` : null;
		case 'organisation':
			return id ? `/admin/dealers/${id}` : null;
		case 'module_model':
			return id ? `/admin/models/${id}` : null;
		case 'user':
			return `/admin/users?q=${encodeURIComponent(entityId)}`;
		default:
			return null;
	}
}

/** Entity names as a person reads them. */
export const ENTITY_LABELS: Record<string, string> = {
	module: 'Module',
	claim: 'Claim',
	shipment: 'Shipment',
	site: 'Site',
	system: 'System',
	allocation: 'Serial run',
	organisation: 'Organisation',
	module_model: 'Model',
	user: 'Person',
	api_token: 'Rig token',
	attachment: 'Photo'
};
