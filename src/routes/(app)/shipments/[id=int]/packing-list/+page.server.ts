import { error } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getShipment } from '$lib/server/services/shipments';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'ship');
	const id = Number(event.params.id);
	if (!Number.isInteger(id) || id < 1) error(404, 'There is no such shipment.');
	try {
		return await getShipment(await getDb(), actor, id);
	} catch (e) {
		errorFrom(e);
	}
};
