import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { dealerSchema } from '$lib/schemas/dealer';
import { parseForm } from '$lib/server/validation';
import { createDealer, listDealers } from '$lib/server/services/dealers';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageDealers');
	return { dealers: await listDealers(await getDb()) };
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireCan(event, 'manageDealers');
		const parsed = await parseForm(dealerSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		let id: number;
		try {
			id = await createDealer(await getDb(), actor, parsed.data);
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/admin/dealers/${id}?created`);
	}
};
