import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { allocationSchema } from '$lib/schemas/allocation';
import { parseForm } from '$lib/server/validation';
import { allocateSerials, listAllocations } from '$lib/server/services/allocations';
import { listModels } from '$lib/server/services/models';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'allocateSerials');
	const db = await getDb();
	return {
		allocations: await listAllocations(db),
		models: await listModels(db, { includeRetired: false })
	};
};

export const actions: Actions = {
	allocate: async (event) => {
		const actor = requireCan(event, 'allocateSerials');
		const parsed = await parseForm(allocationSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		let id: number;
		try {
			id = (await allocateSerials(await getDb(), actor, parsed.data)).id;
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/allocations/${id}`);
	}
};
