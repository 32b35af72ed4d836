import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { allocationSchema } from '$lib/schemas/allocation';
import { parseForm } from '$lib/server/validation';
import { allocateSerials, listAllocations } from '$lib/server/services/allocations';
import { listModels } from '$lib/server/services/models';
import { prepareLabels } from '$lib/server/services/labels';
import { baseUrl } from '$lib/server/base-url';
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
			const db = await getDb();
			id = (await allocateSerials(db, actor, parsed.data)).id;
			// Each label's QR is drawn now, once, so the sheet only reads them.
			await prepareLabels(db, id, baseUrl(event.url));
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/allocations/${id}`);
	}
};
