/**
 * The field pages' data when there is no network: the pages the phone keeps (as their
 * components take them), with the changes waiting on the phone laid over them — a site,
 * system, placed module, photo or checklist made offline shows where it will be once sent.
 * Pure: the store's contents in, the page's data out (used by the offline pages and the
 * service worker).
 */
import { checkSystemDesign, type DesignModelRow } from '$lib/domain/design-check';
import { currentForCRate } from '$lib/domain/model';
import { extractSerialFromScan } from '$lib/domain/serial';
import {
	blankPreview,
	DEFAULT_RULE_SET,
	type CommissioningSystem
} from '$lib/domain/commissioning';
import { systemSchema } from '$lib/schemas/site';
import { fieldPath, type FieldRoute, type Ref } from './routes';
import type { QueuedOp, StoredPage } from './store';

/** Where the pack keeps the module models (full rows), for systems designed on the phone. */
export const MODELS_KEY = '#models';

type Data = Record<string, unknown>;
// The shapes below follow the page loads of src/routes/(app)/{sites,systems}/… (their services'
// answers); tests/offline/views.test.ts compares them with the server's for the same records.
type Slot = { stringNo: number; position: number; serial: string | null; state: string | null };
/** A kept model row: what the design check reads (as the server's row has it), and its name. */
export type ModelRow = Record<string, unknown> &
	DesignModelRow & { id: number; code: string; name: string; retiredAt?: unknown };

export interface OfflineState {
	pages: Map<string, StoredPage>;
	ops: QueuedOp[];
}

export type View =
	| { data: Data; pending: QueuedOp[]; savedAt: number | null }
	| { redirect: string }
	| { missing: string };

const sameRef = (a: unknown, b: Ref) => a !== undefined && String(a) === String(b);
const clone = <T>(v: T): T => structuredClone(v);
/** Changes not yet shown in the kept page: still waiting, or sent after the page was saved. */
const overlay = (op: QueuedOp, savedAt: number | null) =>
	op.status !== 'applied' || (savedAt !== null && (op.sentAt ?? 0) > savedAt);

function opById(state: OfflineState, id: Ref): QueuedOp | undefined {
	return typeof id === 'string' ? state.ops.find((o) => o.id === id) : undefined;
}

/** The serial a scan names, read the way the register reads it (label URL, Digital Link or bare serial). */
export function serialOfScan(scan: string, origin?: string): string | null {
	const r = extractSerialFromScan(scan, origin);
	return r.kind === 'unknown' ? null : r.serial;
}

function placements(state: OfflineState, systemRef: Ref, savedAt: number | null) {
	return state.ops
		.filter((o) => o.type === 'placeModule' && sameRef(o.payload.systemId, systemRef))
		.filter((o) => overlay(o, savedAt) && o.status !== 'rejected')
		.map((o) => ({
			op: o,
			serial: serialOfScan(String(o.payload.scan)) ?? String(o.payload.scan),
			stringNo: Number(o.payload.stringNo),
			position: Number(o.payload.position)
		}));
}

function nextEmpty(strings: { slots: Slot[] }[]) {
	for (const row of strings)
		for (const s of row.slots) if (!s.serial) return { stringNo: s.stringNo, position: s.position };
	return null;
}

function models(state: OfflineState): ModelRow[] {
	return (state.pages.get(MODELS_KEY)?.data.models as ModelRow[] | undefined) ?? [];
}

/** The site page of a site made on the phone. */
function localSite(state: OfflineState, op: QueuedOp): Data {
	const p = op.payload as Record<string, string>;
	const form = state.pages.get('/sites/new')?.data as
		{ dealers?: { id: number; name: string }[]; ownDealer?: string | null } | undefined;
	const dealerOrgId = p.dealerOrgId ? Number(p.dealerOrgId) : null;
	return {
		site: {
			id: op.id,
			name: p.name,
			application: p.application,
			dealerOrgId,
			dealerName: form?.ownDealer ?? form?.dealers?.find((d) => d.id === dealerOrgId)?.name ?? null,
			createdAt: new Date(op.createdAt)
		},
		owner: { name: p.ownerName, contact: p.ownerContact, address: p.address },
		systems: [],
		status: 'no_systems',
		canChange: true,
		created: false
	};
}

function siteView(state: OfflineState, ref: Ref): View {
	const stored = typeof ref === 'number' ? state.pages.get(`/sites/${ref}`) : undefined;
	const made = opById(state, ref);
	if (!stored && !made) return { missing: 'This site was not taken offline on this phone.' };
	const savedAt = stored?.savedAt ?? null;
	const data = stored ? clone(stored.data) : localSite(state, made!);
	const systems = data.systems as Data[];
	for (const s of systems) {
		const extra = placements(state, s.id as Ref, savedAt).length;
		s.filled = (s.filled as number) + extra;
	}
	const pending = state.ops.filter((o) => overlay(o, savedAt));
	for (const op of pending.filter(
		(o) => o.type === 'createSystem' && sameRef(o.payload.siteId, ref)
	)) {
		const p = systemSchema.safeParse(op.payload);
		if (!p.success) continue;
		systems.push({
			id: op.id,
			name: p.data.name,
			status: 'planned',
			series: p.data.series,
			parallel: p.data.parallel,
			inverterName: p.data.inverterName,
			modelCode: p.data.modelCode,
			filled: placements(state, op.id, null).length,
			total: p.data.series * p.data.parallel
		});
	}
	if (systems.length && data.status === 'no_systems') data.status = 'planned';
	return { data, pending: related(state, ref, 'site'), savedAt };
}

/** The system page of a system designed on the phone (before any module is placed). */
function localSystem(state: OfflineState, op: QueuedOp): { data: Data; model: ModelRow } | null {
	const p = systemSchema.safeParse(op.payload);
	const model = p.success ? models(state).find((m) => m.code === p.data.modelCode) : undefined;
	if (!p.success || !model) return null;
	const siteRef = op.payload.siteId as Ref;
	const siteV = siteView(state, siteRef);
	const site = 'data' in siteV ? (siteV.data.site as Data) : { id: siteRef, name: 'Site' };
	const { modelCode: _code, ...fields } = p.data;
	const system = {
		id: op.id,
		siteId: siteRef,
		modelId: model.id,
		...fields,
		preferredMinV: fields.preferredMinV ?? null,
		preferredMaxV: fields.preferredMaxV ?? null,
		maxChargeA: fields.maxChargeA ?? null,
		maxDischargeA: fields.maxDischargeA ?? null,
		status: 'planned',
		createdAt: new Date(op.createdAt)
	};
	const strings = Array.from({ length: system.parallel }, (_, s) => ({
		stringNo: s + 1,
		slots: Array.from({ length: system.series }, (_, q) => ({
			stringNo: s + 1,
			position: q + 1,
			serial: null as string | null,
			state: null as string | null
		}))
	}));
	const total = system.series * system.parallel;
	return {
		model,
		data: {
			system,
			site: {
				id: site.id,
				name: site.name,
				dealerOrgId: site.dealerOrgId ?? null,
				dealerName: site.dealerName ?? null
			},
			model: { id: model.id, code: model.code, name: model.name },
			design: checkSystemDesign(model, system),
			strings,
			filled: 0,
			total,
			next: total ? { stringNo: 1, position: 1 } : null,
			open: true,
			readyToCommission: false,
			canChange: true,
			created: false
		}
	};
}

function systemView(state: OfflineState, ref: Ref): View {
	const stored = typeof ref === 'number' ? state.pages.get(`/systems/${ref}`) : undefined;
	const made = opById(state, ref);
	const savedAt = stored?.savedAt ?? null;
	const data = stored ? clone(stored.data) : made ? localSystem(state, made)?.data : undefined;
	if (!data) return { missing: 'This system was not taken offline on this phone.' };
	const strings = data.strings as { slots: Slot[] }[];
	for (const p of placements(state, ref, savedAt)) {
		const slot = strings[p.stringNo - 1]?.slots[p.position - 1];
		if (slot && !slot.serial) Object.assign(slot, { serial: p.serial, state: 'installed' });
	}
	const filled = strings.flatMap((r) => r.slots).filter((s) => s.serial).length;
	data.filled = filled;
	data.next = nextEmpty(strings);
	data.readyToCommission = data.open && filled === data.total;
	return { data, pending: related(state, ref, 'system'), savedAt };
}

/** The commissioning system of a design, as the server's loadSystemForCommissioning builds it. */
export function evaluationSystemOf(
	system: {
		series: number;
		parallel: number;
		maxChargeA: number | null;
		maxDischargeA: number | null;
	},
	model: ModelRow
): CommissioningSystem {
	const batteryA = currentForCRate(model.maxContinuousC, model.ratedAh) * system.parallel;
	const inverterA = Math.max(system.maxChargeA ?? 0, system.maxDischargeA ?? 0);
	const m = model as unknown as CommissioningSystem['model'];
	return {
		series: system.series,
		parallel: system.parallel,
		maxContinuousA: inverterA > 0 ? Math.min(inverterA, batteryA) : undefined,
		model: {
			cellsSeries: m.cellsSeries,
			cellMinV: m.cellMinV,
			cellNominalV: m.cellNominalV,
			cellMaxV: m.cellMaxV,
			ratedAh: m.ratedAh,
			maxContinuousC: m.maxContinuousC,
			chargeTempMinC: m.chargeTempMinC,
			chargeTempMaxC: m.chargeTempMaxC,
			dischargeTempMinC: m.dischargeTempMinC,
			dischargeTempMaxC: m.dischargeTempMaxC,
			// The data sheet's figure; where a model has none the server falls back on the mean of
			// its factory tests, which the phone does not keep (the server judges again on sync).
			...(model.internalResistanceMohm
				? { internalResistanceMOhm: model.internalResistanceMohm }
				: {})
		}
	};
}

const roundMv = (x: number) => Math.round(x * 1000) / 1000;

/**
 * The rule set a checklist made on the phone is judged by: the one of a checklist kept from
 * the server (a technician's sites all belong to their own organisation, so its market's
 * set), else the default set. The server judges again by its own set when the work is sent.
 */
function keptRuleSet(state: OfflineState): unknown {
	for (const [path, page] of state.pages) {
		if (!path.startsWith('/systems/') || !path.endsWith('/commission')) continue;
		const ruleSet = (page.data?.target as Data | undefined)?.ruleSet;
		if (ruleSet) return ruleSet;
	}
	return DEFAULT_RULE_SET;
}

function localCommission(state: OfflineState, op: QueuedOp): Data | null {
	const built = localSystem(state, op);
	if (!built) return null;
	const { data, model } = built;
	const system = data.system as Data & {
		series: number;
		parallel: number;
		maxChargeA: number | null;
		maxDischargeA: number | null;
	};
	const siteV = siteView(state, system.siteId as Ref);
	const site = 'data' in siteV ? siteV.data : null;
	const owner = (site?.owner as Data | null) ?? null;
	const cells = system.series * model.cellsSeries;
	return {
		target: {
			system,
			site: {
				id: system.siteId,
				name: (site?.site as Data | undefined)?.name ?? 'Site',
				address: owner?.address ?? '',
				ownerName: owner?.name ?? '',
				dealerOrgId: (site?.site as Data | undefined)?.dealerOrgId ?? null
			},
			model,
			strings: Array.from({ length: system.parallel }, (_, s) =>
				Array.from({ length: system.series }, (_, p) => ({
					stringNo: s + 1,
					position: p + 1,
					module: null
				}))
			),
			emptySlots: [],
			voltages: {
				minV: roundMv(cells * model.cellMinV),
				nominalV: roundMv(cells * model.cellNominalV),
				maxV: roundMv(cells * model.cellMaxV)
			},
			evaluationSystem: evaluationSystemOf(system, model),
			ruleSet: keptRuleSet(state),
			attempts: []
		},
		photos: [],
		canSubmit: true
	};
}

type TargetSlot = {
	stringNo: number;
	position: number;
	module: { id: number; serial: string; state: string } | null;
};

function commissionView(state: OfflineState, ref: Ref): View {
	const stored =
		typeof ref === 'number' ? state.pages.get(`/systems/${ref}/commission`) : undefined;
	const made = opById(state, ref);
	const savedAt = stored?.savedAt ?? null;
	const data = stored ? clone(stored.data) : made ? localCommission(state, made) : null;
	if (!data) return { missing: 'This system’s checklist was not taken offline on this phone.' };
	const target = data.target as Data & { strings: TargetSlot[][]; attempts: Data[] };
	for (const p of placements(state, ref, savedAt)) {
		const slot = target.strings[p.stringNo - 1]?.[p.position - 1];
		if (slot && !slot.module) slot.module = { id: 0, serial: p.serial, state: 'installed' };
	}
	target.emptySlots = target.strings.flat().filter((s) => !s.module);
	// A checklist kept before the server sent its blank preview, or one made on the phone.
	target.preview ??= blankPreview(
		target.evaluationSystem as CommissioningSystem,
		target.ruleSet as Parameters<typeof blankPreview>[1]
	);
	const mine = state.ops.filter((o) => sameRef(o.payload.systemId, ref) && overlay(o, savedAt));
	const photos = data.photos as Data[];
	for (const o of mine.filter((o) => o.type === 'addPhoto' && o.status !== 'rejected')) {
		const photo = o.payload.photo as { name?: string; type?: string } | undefined;
		photos.push({
			id: o.id,
			fileName: photo?.name ?? 'photo',
			contentType: photo?.type ?? '',
			bytes: o.blob?.size ?? 0,
			caption: (o.payload.caption as string) || null,
			createdAt: new Date(o.createdAt)
		});
	}
	for (const o of mine.filter((o) => o.type === 'submitCommissioning'))
		target.attempts.unshift({
			id: o.id,
			overall: o.local?.overall ?? 'incomplete',
			certificateNo: null,
			commissionedOn: o.local?.day ?? new Date(o.createdAt).toISOString().slice(0, 10),
			technicianName: String(o.payload.technicianName ?? ''),
			createdAt: new Date(o.createdAt)
		});
	return { data, pending: related(state, ref, 'system'), savedAt };
}

/** The changes that concern a site or system, for the note above its page. */
function related(state: OfflineState, ref: Ref, kind: 'site' | 'system'): QueuedOp[] {
	return state.ops.filter(
		(o) =>
			o.status !== 'applied' &&
			(o.id === ref ||
				sameRef(kind === 'site' ? o.payload.siteId : o.payload.systemId, ref) ||
				(kind === 'site' &&
					o.type !== 'createSite' &&
					state.ops.some(
						(s) =>
							s.type === 'createSystem' &&
							sameRef(s.payload.siteId, ref) &&
							sameRef(o.payload.systemId, s.id)
					)))
	);
}

function sitesView(state: OfflineState): View {
	const stored = state.pages.get('/sites');
	const data = stored ? clone(stored.data) : { q: '', sites: [], canCreate: true };
	const list = data.sites as Data[];
	const made = state.ops.filter(
		(o) => o.type === 'createSite' && overlay(o, stored?.savedAt ?? null)
	);
	for (const op of made.reverse()) {
		const v = localSite(state, op);
		const site = v.site as Data;
		const owner = v.owner as Data;
		list.unshift({
			...site,
			systemCount: state.ops.filter(
				(o) => o.type === 'createSystem' && sameRef(o.payload.siteId, op.id)
			).length,
			commissionedCount: 0,
			status: 'no_systems',
			owner: { name: owner.name, address: owner.address }
		});
	}
	if (!stored && !made.length)
		return { missing: 'The list of sites was not taken offline on this phone.' };
	return { data, pending: made, savedAt: stored?.savedAt ?? null };
}

function newSystemView(state: OfflineState, ref: Ref): View {
	const stored = typeof ref === 'number' ? state.pages.get(`/sites/${ref}/systems/new`) : undefined;
	if (stored) return { data: clone(stored.data), pending: [], savedAt: stored.savedAt };
	const made = opById(state, ref);
	if (!made) return { missing: 'This site was not taken offline on this phone.' };
	return {
		data: {
			site: { id: made.id, name: made.payload.name },
			models: models(state)
				.filter((m) => !m.retiredAt)
				.map((m) => ({ code: m.code, name: m.name }))
		},
		pending: [made],
		savedAt: null
	};
}

/** The page data of a field page from what the phone keeps, or why it cannot be shown. */
export function offlineView(state: OfflineState, route: FieldRoute, online: boolean): View {
	if ('ref' in route && typeof route.ref === 'string') {
		// A record made on the phone that has reached the register: its own page takes over.
		const op = opById(state, route.ref);
		if (op?.status === 'applied' && op.ref !== undefined) {
			const real = { ...route, ref: op.ref } as FieldRoute;
			if (online || state.pages.has(fieldPath(real))) return { redirect: fieldPath(real) };
		}
		if (!op && online) return { redirect: '/sites' };
	}
	switch (route.kind) {
		case 'sites':
			return sitesView(state);
		case 'newSite': {
			const stored = state.pages.get('/sites/new');
			return stored
				? { data: clone(stored.data), pending: [], savedAt: stored.savedAt }
				: { missing: 'The new-site form was not taken offline on this phone.' };
		}
		case 'site':
			return siteView(state, route.ref);
		case 'newSystem':
			return newSystemView(state, route.ref);
		case 'system':
			return systemView(state, route.ref);
		case 'commission':
			return commissionView(state, route.ref);
		case 'certificate': {
			const stored =
				typeof route.ref === 'number' ? state.pages.get(`/commissionings/${route.ref}`) : undefined;
			if (stored) return { data: clone(stored.data), pending: [], savedAt: stored.savedAt };
			return {
				missing:
					'The certificate is issued by the register once the checklist has been sent; it opens here after that.'
			};
		}
	}
}
