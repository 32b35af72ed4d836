/**
 * The field forms' actions when there is no network: the form is read with the same schema
 * as its action on the server, checked against what the phone shows, and becomes an
 * operation for `POST /api/sync`; the answer is what the action would have answered, so the
 * page carries on as it does online. Nothing is sent from here.
 */
import { evaluateCommissioning } from '$lib/domain/commissioning';
import { checkSystemDesign } from '$lib/domain/design-check';
import { commissioningSchema, toMeasurements } from '$lib/schemas/commissioning';
import { placeModuleSchema, siteSchema, systemSchema } from '$lib/schemas/site';
import type { SyncOperationType } from '$lib/schemas/sync';
import type { FieldRoute } from './routes';
import type { QueuedOp } from './store';
import { MODELS_KEY, offlineView, serialOfScan, type ModelRow, type OfflineState } from './views';

type Fields = Record<string, string>;
export type ActionAnswer =
	| { type: 'success'; status: 200; data: Record<string, unknown> }
	| { type: 'failure'; status: number; data: Record<string, unknown> }
	| { type: 'redirect'; status: 303; location: string };

export interface NewOp {
	id: string;
	type: SyncOperationType;
	payload: Record<string, unknown>;
	summary: string;
	blob?: Blob;
	local?: QueuedOp['local'];
}
export interface OfflineAction {
	answer: ActionAnswer;
	add?: NewOp;
	/** An operation to take back off the queue (a module placed offline, taken out again). */
	drop?: string;
}

const PHOTO_MAX_BYTES = 10 * 1024 * 1024;
const issuesOf = (e: { issues: { path: PropertyKey[]; message: string }[] }) =>
	e.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
const fail = (status: number, data: Record<string, unknown>): OfflineAction => ({
	answer: { type: 'failure', status, data }
});
const NEEDS_NETWORK = (what: string): OfflineAction =>
	fail(503, { message: `${what} needs a connection; it is not kept on the phone.` });

/** The form's text fields (files aside), repeated keys as the last value, as the server's parseForm reads them. */
export function textFields(form: FormData): Fields {
	const out: Fields = {};
	for (const [k, v] of form) if (typeof v === 'string') out[k] = v;
	return out;
}

/** Answers a field form's action on the phone. `id` is the new operation's UUID; `today` the phone's calendar day. */
export function offlineAction(
	state: OfflineState,
	route: FieldRoute,
	action: string,
	form: FormData,
	opts: { id: string; today: string; origin?: string }
): OfflineAction {
	const fields = textFields(form);
	const { id } = opts;
	if (route.kind === 'newSite' && action === 'create') {
		const parsed = siteSchema.safeParse(fields);
		if (!parsed.success) return fail(400, { issues: issuesOf(parsed.error), values: fields });
		return {
			add: { id, type: 'createSite', payload: fields, summary: `New site ${parsed.data.name}` },
			answer: { type: 'redirect', status: 303, location: `/sites/${id}?created` }
		};
	}
	if (route.kind === 'newSystem' && action === 'create') {
		const parsed = systemSchema.safeParse(fields);
		if (!parsed.success) return fail(400, { issues: issuesOf(parsed.error), values: fields });
		const s = parsed.data;
		const models = (state.pages.get(MODELS_KEY)?.data.models ?? []) as ModelRow[];
		const model = models.find((m) => m.code === s.modelCode);
		if (!model) {
			const message = `There is no module model ${s.modelCode} on this phone; choose one from the list.`;
			return fail(400, { message, issues: [{ path: 'modelCode', message }], values: fields });
		}
		const result = checkSystemDesign(model, s);
		if (!result.fitsWindow)
			return fail(400, {
				message: `${s.series} × ${s.modelCode} per string does not fit the inverter's DC window, so the system was not saved.`,
				issues: result.problems.map((message) => ({ path: 'design', message })),
				values: fields
			});
		return {
			add: {
				id,
				type: 'createSystem',
				payload: { siteId: route.ref, ...fields },
				summary: `New system ${s.name}`
			},
			answer: { type: 'redirect', status: 303, location: `/systems/${id}?created` }
		};
	}
	if (route.kind === 'system' && (action === 'place' || action === 'remove'))
		return systemAction(state, route, action, fields, opts);
	if (route.kind === 'commission' && action === 'submit') return submit(state, route, fields, opts);
	if (route.kind === 'commission' && action === 'photo') {
		const photo = form.get('photo');
		if (!(photo instanceof Blob) || photo.size === 0)
			return fail(400, { photoError: 'Take or choose a photo first.' });
		if (photo.size > PHOTO_MAX_BYTES)
			return fail(400, {
				photoError: `The photo is over the 10 MB limit. Choose a smaller photo size in the camera settings.`
			});
		const name = photo instanceof File ? photo.name : 'photo.jpg';
		return {
			add: {
				id,
				type: 'addPhoto',
				payload: {
					systemId: route.ref,
					photo: { name, type: photo.type },
					caption: fields.caption ?? ''
				},
				blob: photo,
				summary: `Photo ${fields.caption || name}`
			},
			answer: { type: 'success', status: 200, data: { photoSaved: id } }
		};
	}
	return NEEDS_NETWORK('This action');
}

function systemAction(
	state: OfflineState,
	route: Extract<FieldRoute, { kind: 'system' }>,
	action: 'place' | 'remove',
	fields: Fields,
	opts: { id: string; origin?: string }
): OfflineAction {
	const view = offlineView(state, route, false);
	if (!('data' in view)) return fail(404, { action, message: 'This system is not on this phone.' });
	const data = view.data as {
		system: { name: string };
		strings: { slots: { stringNo: number; position: number; serial: string | null }[] }[];
		next: { stringNo: number; position: number } | null;
		total: number;
		filled: number;
		open: boolean;
	};
	const slots = data.strings.flatMap((r) => r.slots);
	if (action === 'remove') {
		const serial = (fields.serial ?? '').trim();
		const placedHere = state.ops.find(
			(o) =>
				o.type === 'placeModule' &&
				o.status !== 'applied' &&
				String(o.payload.systemId) === String(route.ref) &&
				serialOfScan(String(o.payload.scan), opts.origin) === serial
		);
		if (!placedHere)
			return fail(409, {
				action,
				message: `${serial} is in the register already: taking it out needs a connection.`
			});
		return {
			drop: placedHere.id,
			answer: {
				type: 'success',
				status: 200,
				data: {
					action,
					removed: {
						serial,
						stringNo: Number(placedHere.payload.stringNo),
						position: Number(placedHere.payload.position),
						state: 'shipped'
					}
				}
			}
		};
	}
	const parsed = placeModuleSchema.safeParse(fields);
	if (!parsed.success) {
		const issues = issuesOf(parsed.error);
		return fail(400, { action, message: issues[0]?.message, issues });
	}
	if (!data.open)
		return fail(409, {
			action,
			message: `${data.system.name} is commissioned: modules can no longer be added or taken out here.`
		});
	const serial = serialOfScan(parsed.data.scan, opts.origin);
	if (!serial)
		return fail(404, {
			action,
			message: 'This scan is not a Packledger label.',
			scan: parsed.data.scan
		});
	const here = slots.find((s) => s.serial === serial);
	if (here)
		return fail(409, {
			action,
			message: `${serial} is already in this system (string ${here.stringNo}, position ${here.position}).`
		});
	const target = parsed.data.slot ?? data.next;
	if (!target)
		return fail(409, {
			action,
			message: `Every slot of ${data.system.name} is filled (${data.filled} of ${data.total}).`
		});
	const occupant = slots.find(
		(s) => s.stringNo === target.stringNo && s.position === target.position
	);
	if (!occupant)
		return fail(400, {
			action,
			message: `String ${target.stringNo}, position ${target.position} is outside this system.`
		});
	if (occupant.serial)
		return fail(409, {
			action,
			message: `String ${target.stringNo}, position ${target.position} already holds ${occupant.serial}. Take it out first or choose an empty slot.`
		});
	return {
		add: {
			id: opts.id,
			type: 'placeModule',
			// The slot the technician saw is sent, so the register places it exactly there or says why not.
			payload: {
				systemId: route.ref,
				scan: parsed.data.scan,
				stringNo: String(target.stringNo),
				position: String(target.position)
			},
			summary: `${serial} into ${data.system.name}, string ${target.stringNo} position ${target.position}`
		},
		answer: {
			type: 'success',
			status: 200,
			data: {
				action,
				placed: { serial, ...target, filled: data.filled + 1, total: data.total }
			}
		}
	};
}

function submit(
	state: OfflineState,
	route: Extract<FieldRoute, { kind: 'commission' }>,
	fields: Fields,
	opts: { id: string; today: string }
): OfflineAction {
	const parsed = commissioningSchema.safeParse(fields);
	if (!parsed.success) return fail(400, { issues: issuesOf(parsed.error), values: fields });
	const view = offlineView(state, route, false);
	if (!('data' in view)) return fail(404, { message: 'This system is not on this phone.' });
	const target = (view.data as { target: Record<string, unknown> }).target as {
		system: { name: string; status: string };
		strings: { stringNo: number; position: number; module: { serial: string } | null }[][];
		emptySlots: { stringNo: number; position: number }[];
		evaluationSystem: Parameters<typeof evaluateCommissioning>[0];
		ruleSet?: Parameters<typeof evaluateCommissioning>[2];
	};
	if (target.system.status === 'commissioned')
		return fail(409, { message: `${target.system.name} is already commissioned.` });
	if (target.emptySlots.length)
		return fail(409, {
			message: `No module is recorded at ${target.emptySlots.map((s) => `string ${s.stringNo} position ${s.position}`).join(', ')}. Scan every module of the system before commissioning it.`
		});
	const result = evaluateCommissioning(
		target.evaluationSystem,
		toMeasurements(parsed.data),
		target.ruleSet ?? undefined
	);
	return {
		add: {
			id: opts.id,
			type: 'submitCommissioning',
			payload: {
				systemId: route.ref,
				...fields,
				// The modules the readings were taken on: the register refuses them if others are there now.
				serials: target.strings.map((row) => row.map((s) => s.module?.serial ?? null))
			},
			summary: `Checklist of ${target.system.name} (${result.overall} on the phone)`,
			local: { overall: result.overall, day: opts.today }
		},
		answer: {
			type: 'success',
			status: 200,
			data: {
				submitted: {
					id: opts.id,
					overall: result.overall,
					certificateNo: null,
					commissionedOn: opts.today,
					items: result.items,
					mail: null,
					queued: true
				}
			}
		}
	};
}
