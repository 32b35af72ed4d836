import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { newShipmentSchema } from '$lib/schemas/shipment';
import { parseForm } from '$lib/server/validation';
import { createShipment, listShipments } from '$lib/server/services/shipments';
import { listActiveDealers } from '$lib/server/services/dealers';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'ship');
	const db = await getDb();
	return { shipments: await listShipments(db, actor), dealers: await listActiveDealers(db) };
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireCan(event, 'ship');
		const parsed = await parseForm(newShipmentSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		let id: number;
		try {
			id = (await createShipment(await getDb(), actor, parsed.data)).id;
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/shipments/${id}`);
	}
};
