import { error, fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import {
	shipmentDeleteSchema,
	shipmentDispatchSchema,
	shipmentNoteSchema,
	shipmentRangeSchema,
	shipmentRemoveSchema,
	shipmentScanSchema
} from '$lib/schemas/shipment';
import { parseForm } from '$lib/server/validation';
import {
	addRangeToShipment,
	addToShipment,
	removeFromShipment
} from '$lib/server/services/shipment-packing';
import {
	deleteDraftShipment,
	getShipment,
	updateShipmentNote
} from '$lib/server/services/shipments';
import { dispatchShipment } from '$lib/server/services/shipment-dispatch';
import { baseUrl } from '$lib/server/base-url';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

function shipmentId(event: Pick<RequestEvent, 'params'>): number {
	const id = Number(event.params.id);
	if (!Number.isInteger(id) || id < 1) error(404, 'There is no such shipment.');
	return id;
}

// Each failure says which form it belongs to (values.action), so the page shows it there.
const invalid = (
	action: string,
	p: { issues: { path: string; message: string }[]; values: Record<string, string> }
) =>
	fail(400, {
		message: p.issues[0]?.message ?? 'Check the form.',
		issues: p.issues,
		values: { ...p.values, action }
	});

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'ship');
	try {
		return await getShipment(await getDb(), actor, shipmentId(event));
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	scan: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(shipmentScanSchema, event.request);
		if (!parsed.ok) return invalid('scan', parsed);
		try {
			return {
				scanned: await addToShipment(
					await getDb(),
					actor,
					shipmentId(event),
					parsed.data.scan,
					baseUrl(event.url)
				)
			};
		} catch (e) {
			return failFrom(e, { action: 'scan', scan: parsed.data.scan });
		}
	},
	range: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(shipmentRangeSchema, event.request);
		if (!parsed.ok) return invalid('range', parsed);
		try {
			return {
				range: await addRangeToShipment(
					await getDb(),
					actor,
					shipmentId(event),
					parsed.data.first,
					parsed.data.last
				)
			};
		} catch (e) {
			return failFrom(e, { ...parsed.data, action: 'range' });
		}
	},
	remove: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(shipmentRemoveSchema, event.request);
		if (!parsed.ok) return invalid('remove', parsed);
		try {
			return {
				removed: await removeFromShipment(
					await getDb(),
					actor,
					shipmentId(event),
					parsed.data.serial
				)
			};
		} catch (e) {
			return failFrom(e, { action: 'remove' });
		}
	},
	note: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(shipmentNoteSchema, event.request);
		if (!parsed.ok) return invalid('note', parsed);
		try {
			return {
				noteSaved: await updateShipmentNote(
					await getDb(),
					actor,
					shipmentId(event),
					parsed.data.note
				)
			};
		} catch (e) {
			return failFrom(e, { ...parsed.data, action: 'note' });
		}
	},
	dispatch: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(shipmentDispatchSchema, event.request);
		if (!parsed.ok) return invalid('dispatch', parsed);
		try {
			return { dispatched: await dispatchShipment(await getDb(), actor, shipmentId(event)) };
		} catch (e) {
			return failFrom(e, { action: 'dispatch' });
		}
	},
	delete: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(shipmentDeleteSchema, event.request);
		if (!parsed.ok) return invalid('delete', parsed);
		let reference: string;
		try {
			reference = (await deleteDraftShipment(await getDb(), actor, shipmentId(event))).reference;
		} catch (e) {
			return failFrom(e, { action: 'delete' });
		}
		redirect(303, `/shipments?deleted=${reference}`);
	}
};
