import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { modelInputSchema } from '$lib/schemas/model';
import { parseForm } from '$lib/server/validation';
import { failFrom } from '$lib/server/http';
import { createModel } from '$lib/server/services/models';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageModels');
	return {};
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireCan(event, 'manageModels');
		const parsed = await parseForm(modelInputSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		let id: number;
		try {
			id = await createModel(await getDb(), actor, parsed.data);
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/admin/models/${id}?created`);
	}
};
