/**
 * The phone's offline layer against the server: pages built on the phone for records made
 * offline must match what the register's own services answer for the same records, and the
 * forms answered on the phone must refuse what the register refuses.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { createSite, getSite } from '$lib/server/services/sites';
import { createSystem, getSystem } from '$lib/server/services/systems';
import { loadSystemForCommissioning } from '$lib/server/services/commissioning';
import { listModels } from '$lib/server/services/models';
import { siteSchema, systemSchema } from '$lib/schemas/site';
import { MODELS_KEY, offlineView, type OfflineState } from '$lib/offline/views';
import { offlineAction } from '$lib/offline/actions';
import { parseFieldPath } from '$lib/offline/routes';
import { sendable } from '$lib/offline/sync';
import { applyChoice, choicesFor } from '$lib/offline/choices';
import type { QueuedOp } from '$lib/offline/store';
import { CONFLICT_PATH } from '$lib/schemas/sync';
import { formatSerial } from '$lib/domain/serial';
import { actorFor, createSeededDb } from '../factories/db';
import { SIGNATURE } from '../factories/signatures';

/** Real serials (check character per ISO/IEC 7064 MOD 37-36, as the labels carry them). */
const S = (n: number) => formatSerial({ variant: '48', year: 2026, number: n });

let db: Db;
let tech: Actor;
let saltmarsh: number;
let models: Awaited<ReturnType<typeof listModels>>;

const siteForm = () => ({
	name: 'Gullwing croft',
	ownerName: 'Tamsin Reed',
	ownerContact: '+61 400 111 222',
	address: '12 Gullwing Track, Saltmarsh coast',
	application: 'off_grid_home',
	dealerOrgId: String(saltmarsh)
});
// 3 × TC-HC-48 × 2 strings (invented model: 22 cells of 1.8 / 2.35 / 2.75 V): 118.8 to 181.5 V.
const systemForm = (over: Record<string, string> = {}) => ({
	name: 'Croft bank',
	modelCode: 'TC-HC-48',
	series: '3',
	parallel: '2',
	inverterName: 'Invented 8 kW inverter',
	inverterMinV: '100',
	inverterMaxV: '200',
	preferredMinV: '',
	preferredMaxV: '',
	maxChargeA: '120',
	maxDischargeA: '150',
	...over
});

let seq = 0;
const queued = (
	type: QueuedOp['type'],
	payload: Record<string, unknown>,
	over: Partial<QueuedOp> = {}
): QueuedOp => ({
	id: randomUUID(),
	seq: ++seq,
	type,
	payload,
	status: 'waiting',
	createdAt: Date.parse('2026-12-02T01:00:00Z'),
	summary: type,
	...over
});
const form = (fields: Record<string, string>) => {
	const f = new FormData();
	for (const [k, v] of Object.entries(fields)) f.set(k, v);
	return f;
};
const opts = (id = randomUUID()) => ({
	id,
	today: '2026-12-02',
	origin: 'https://packledger.example'
});

beforeAll(async () => {
	db = await createSeededDb();
	tech = await actorFor(db, 'tech@tidewater.example');
	const [org] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.name, 'Saltmarsh Solar'));
	saltmarsh = org.id;
	models = await listModels(db);
});

function phoneWith(
	ops: QueuedOp[],
	pages: Record<string, Record<string, unknown>> = {}
): OfflineState {
	const all = { [MODELS_KEY]: { models }, ...pages };
	return {
		ops,
		pages: new Map(Object.entries(all).map(([path, data]) => [path, { path, data, savedAt: 1 }]))
	};
}

describe('pages of records made on the phone match the register’s', () => {
	it('builds the system page and checklist of an offline system exactly as the server does for the same input', async () => {
		const siteId = await createSite(db, tech, siteSchema.parse(siteForm()));
		const { id } = await createSystem(db, tech, siteId, systemSchema.parse(systemForm()));
		const server = await getSystem(db, tech, id);
		const serverChecklist = await loadSystemForCommissioning(db, tech, id);

		const site = queued('createSite', siteForm());
		const system = queued('createSystem', { siteId: site.id, ...systemForm() });
		const phone = phoneWith([site, system]);
		const view = offlineView(phone, { kind: 'system', ref: system.id }, false);
		expect('data' in view).toBe(true);
		if (!('data' in view)) return;
		const d = view.data as typeof server;
		expect(d.design).toEqual(server.design);
		expect(d.strings).toEqual(server.strings);
		expect({ filled: d.filled, total: d.total, next: d.next, open: d.open }).toEqual({
			filled: server.filled,
			total: server.total,
			next: server.next,
			open: server.open
		});
		expect(d.model).toEqual(server.model);

		const c = offlineView(phone, { kind: 'commission', ref: system.id }, false);
		if (!('data' in c)) throw new Error('no checklist');
		const t = (c.data as { target: typeof serverChecklist }).target;
		expect(t.evaluationSystem).toEqual(serverChecklist.evaluationSystem);
		expect(t.voltages).toEqual(serverChecklist.voltages);
		expect(t.model.code).toBe(serverChecklist.model.code);
		expect(t.strings.map((r) => r.map((s) => [s.stringNo, s.position]))).toEqual(
			serverChecklist.strings.map((r) => r.map((s) => [s.stringNo, s.position]))
		);
	});

	it('lays modules placed offline over a kept system page, its site page and its checklist', async () => {
		const siteId = await createSite(db, tech, siteSchema.parse(siteForm()));
		const { id } = await createSystem(
			db,
			tech,
			siteId,
			systemSchema.parse(
				systemForm({ series: '2', parallel: '1', inverterMinV: '70', inverterMaxV: '130' })
			)
		);
		const pages = {
			[`/sites/${siteId}`]: {
				...(await getSite(db, tech, siteId)),
				canChange: true,
				created: false
			},
			[`/systems/${id}`]: { ...(await getSystem(db, tech, id)), canChange: true, created: false },
			[`/systems/${id}/commission`]: {
				target: await loadSystemForCommissioning(db, tech, id),
				photos: [],
				canSubmit: true
			}
		};
		const placeA = queued('placeModule', {
			systemId: id,
			scan: S(101),
			stringNo: '1',
			position: '1'
		});
		const placeB = queued('placeModule', {
			systemId: id,
			scan: `https://packledger.example/m/${S(102)}`,
			stringNo: '1',
			position: '2'
		});
		const phone = phoneWith([placeA, placeB], pages);
		const sys = offlineView(phone, { kind: 'system', ref: id }, false);
		if (!('data' in sys)) throw new Error('no system');
		const d = sys.data as Awaited<ReturnType<typeof getSystem>>;
		expect(d.strings[0].slots.map((s) => s.serial)).toEqual([S(101), S(102)]);
		expect({ filled: d.filled, next: d.next, ready: d.readyToCommission }).toEqual({
			filled: 2,
			next: null,
			ready: true
		});
		expect(sys.pending.map((o) => o.id)).toEqual([placeA.id, placeB.id]);
		const site = offlineView(phone, { kind: 'site', ref: siteId }, false);
		if (!('data' in site)) throw new Error('no site');
		expect((site.data.systems as { filled: number }[])[0].filled).toBe(2);
		const c = offlineView(phone, { kind: 'commission', ref: id }, false);
		if (!('data' in c)) throw new Error('no checklist');
		expect((c.data.target as { emptySlots: unknown[] }).emptySlots).toEqual([]);
		// The kept page itself is untouched: the overlay works on a copy.
		expect((pages[`/systems/${id}`] as { filled: number }).filled).toBe(0);
	});

	it('says plainly what is not on the phone, and hands over to the register’s page once a record is in', () => {
		const phone = phoneWith([]);
		expect(offlineView(phone, { kind: 'site', ref: 99 }, false)).toEqual({
			missing: 'This site was not taken offline on this phone.'
		});
		const made = queued('createSite', siteForm(), { status: 'applied', ref: 42 });
		expect(offlineView(phoneWith([made]), { kind: 'site', ref: made.id }, true)).toEqual({
			redirect: '/sites/42'
		});
	});
});

describe('forms answered on the phone', () => {
	const system = () =>
		queued('createSystem', {
			siteId: 7,
			...systemForm({ series: '2', parallel: '1', inverterMinV: '70', inverterMaxV: '130' })
		});

	it('places in the next empty slot, sends that slot, and refuses a filled slot or a module already here', () => {
		const sys = system();
		let phone = phoneWith([sys]);
		const first = offlineAction(
			phone,
			{ kind: 'system', ref: sys.id },
			'place',
			form({ scan: S(101) }),
			opts()
		);
		expect(first.answer).toMatchObject({
			type: 'success',
			data: { placed: { serial: S(101), stringNo: 1, position: 1, filled: 1, total: 2 } }
		});
		expect(first.add?.payload).toEqual({
			systemId: sys.id,
			scan: S(101),
			stringNo: '1',
			position: '1'
		});
		phone = phoneWith([sys, { ...queued('placeModule', first.add!.payload), id: first.add!.id }]);
		const again = offlineAction(
			phone,
			{ kind: 'system', ref: sys.id },
			'place',
			form({ scan: S(101) }),
			opts()
		);
		expect(again.answer).toMatchObject({ type: 'failure', status: 409 });
		expect((again.answer as unknown as { data: { message: string } }).data.message).toBe(
			`${S(101)} is already in this system (string 1, position 1).`
		);
		const taken = offlineAction(
			phone,
			{ kind: 'system', ref: sys.id },
			'place',
			form({ scan: S(102), stringNo: '1', position: '1' }),
			opts()
		);
		expect((taken.answer as unknown as { data: { message: string } }).data.message).toBe(
			`String 1, position 1 already holds ${S(101)}. Take it out first or choose an empty slot.`
		);
		// Taking out a module placed offline takes the change back off the queue.
		const out = offlineAction(
			phone,
			{ kind: 'system', ref: sys.id },
			'remove',
			form({ serial: S(101) }),
			opts()
		);
		expect(out.drop).toBe(first.add!.id);
	});

	it('refuses a design outside the inverter window with the same reasons as the register', async () => {
		const input = systemForm({ inverterMaxV: '150' });
		let serverIssues: unknown;
		try {
			const siteId = await createSite(db, tech, siteSchema.parse(siteForm()));
			await createSystem(db, tech, siteId, systemSchema.parse(input));
		} catch (e) {
			serverIssues = (e as { issues: unknown }).issues;
		}
		expect(serverIssues).toBeTruthy();
		const r = offlineAction(
			phoneWith([]),
			{ kind: 'newSystem', ref: 7 },
			'create',
			form(input),
			opts()
		);
		expect(r.add).toBeUndefined();
		expect((r.answer as unknown as { data: { issues: unknown } }).data.issues).toEqual(
			serverIssues
		);
	});

	// A signature as the phone's pad sends it: strokes of points in a 300 × 120 box.
	it('keeps a passing checklist with the modules it was measured on, and refuses one with empty slots', () => {
		const sys = system();
		const fields = {
			'moduleOcvV.1.1': '50,60',
			'moduleOcvV.1.2': '50,62',
			'stringVoltageV.1': '101,2',
			insulationTestV: '500',
			insulationMohm: '50',
			polarityChecked: 'yes',
			torqueConfirmed: 'yes',
			deviceRatingA: '200',
			deviceDcRatingV: '150',
			deviceBreakingKA: '25',
			stringProtection: 'yes',
			ambientC: '18',
			stopChargeProven: 'yes',
			technicianSignature: SIGNATURE,
			ownerSignature: SIGNATURE,
			technicianName: 'Ilse Fenwick',
			licenceNumber: 'EL-40917',
			handoverName: '',
			cautionsAcknowledged: 'yes'
		};
		const empty = offlineAction(
			phoneWith([sys]),
			{ kind: 'commission', ref: sys.id },
			'submit',
			form(fields),
			opts()
		);
		expect(empty.answer).toMatchObject({ type: 'failure', status: 409 });
		const placed = [1, 2].map((p) =>
			queued('placeModule', {
				systemId: sys.id,
				scan: S(100 + p),
				stringNo: '1',
				position: String(p)
			})
		);
		const r = offlineAction(
			phoneWith([sys, ...placed]),
			{ kind: 'commission', ref: sys.id },
			'submit',
			form(fields),
			opts()
		);
		expect(r.answer).toMatchObject({
			type: 'success',
			data: { submitted: { overall: 'pass', certificateNo: null, queued: true } }
		});
		expect(r.add?.payload.serials).toEqual([[S(101), S(102)]]);
		expect(r.add?.local).toEqual({ overall: 'pass', day: '2026-12-02' });
		const unsigned = offlineAction(
			phoneWith([sys, ...placed]),
			{ kind: 'commission', ref: sys.id },
			'submit',
			form({ ...fields, licenceNumber: '' }),
			opts()
		);
		expect(unsigned.answer).toMatchObject({ type: 'failure', status: 400 });
	});
});

describe('sending and choosing', () => {
	it('holds back what depends on a record not in the register, and sends it with its parent', () => {
		const site = queued('createSite', siteForm(), { status: 'rejected' });
		const sys = queued('createSystem', { siteId: site.id, ...systemForm() });
		const other = queued('placeModule', { systemId: 5, scan: 'X' });
		expect(sendable([site, sys, other])).toEqual({ send: [other], blocked: [sys] });
		const fixed = { ...site, status: 'waiting' as const };
		expect(sendable([fixed, sys, other]).send.map((o) => o.id)).toEqual([
			site.id,
			sys.id,
			other.id
		]);
	});

	it('offers the next empty slot for a slot taken meanwhile, and sending readings anyway when modules changed', () => {
		const place = queued(
			'placeModule',
			{ systemId: 5, scan: S(101), stringNo: '1', position: '1' },
			{
				status: 'rejected',
				issues: [{ path: CONFLICT_PATH, message: 'String 1, position 1 already holds X.' }]
			}
		);
		expect(choicesFor(place)).toEqual(['next-slot', 'send-again', 'discard']);
		expect(applyChoice(place, 'next-slot')).toMatchObject({
			status: 'waiting',
			payload: { systemId: 5, scan: S(101) }
		});
		expect(applyChoice(place, 'next-slot')?.payload).not.toHaveProperty('stringNo');
		const checklist = queued(
			'submitCommissioning',
			{ systemId: 5, technicianName: 'Ilse Fenwick', serials: [['A', 'B']] },
			{
				status: 'rejected',
				issues: [
					{
						path: CONFLICT_PATH,
						message: 'The modules of Croft bank changed while you were offline: …'
					}
				]
			}
		);
		expect(choicesFor(checklist)).toEqual(['send-anyway', 'send-again', 'download', 'discard']);
		const anyway = applyChoice(checklist, 'send-anyway');
		expect(anyway?.payload).toEqual({ systemId: 5, technicianName: 'Ilse Fenwick' });
		expect(applyChoice(checklist, 'discard')).toBeNull();
		const bad = queued(
			'createSite',
			{ ...siteForm(), name: 'X' },
			{
				status: 'rejected',
				issues: [{ path: 'name', message: 'Site name needs at least 2 characters.' }]
			}
		);
		expect(choicesFor(bad)).toContain('edit');
		expect(applyChoice(bad, 'edit', { name: 'Gullwing' })?.payload.name).toBe('Gullwing');
	});
});

describe('field paths', () => {
	it('reads record numbers and operation ids, and nothing else', () => {
		const id = randomUUID();
		expect(parseFieldPath('/sites')).toEqual({ kind: 'sites' });
		expect(parseFieldPath('/offline/sites/new')).toEqual({ kind: 'newSite' });
		expect(parseFieldPath(`/sites/${id}/systems/new`)).toEqual({ kind: 'newSystem', ref: id });
		expect(parseFieldPath('/systems/12/commission')).toEqual({ kind: 'commission', ref: 12 });
		expect(parseFieldPath('/commissionings/3')).toEqual({ kind: 'certificate', ref: 3 });
		for (const p of [
			'/systems/0',
			'/systems/abc',
			'/systems/12/edit',
			'/fleet',
			'/sites/1/x',
			`/systems/${id}x`
		])
			expect(parseFieldPath(p)).toBeNull();
	});
});
