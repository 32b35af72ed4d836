import { error, fail, type RequestEvent } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { dealerSchema } from '$lib/schemas/dealer';
import { parseForm } from '$lib/server/validation';
import { getDealer, setDealerActive, updateDealer } from '$lib/server/services/dealers';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

function dealerId(event: Pick<RequestEvent, 'params'>): number {
	const id = Number(event.params.id);
	if (!Number.isInteger(id) || id < 1) error(404, 'There is no such dealer.');
	return id;
}

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageDealers');
	try {
		return await getDealer(await getDb(), dealerId(event));
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	save: async (event) => {
		const actor = requireCan(event, 'manageDealers');
		const parsed = await parseForm(dealerSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await updateDealer(await getDb(), actor, dealerId(event), parsed.data);
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		return { saved: true };
	},
	deactivate: async (event) => {
		const actor = requireCan(event, 'manageDealers');
		try {
			await setDealerActive(await getDb(), actor, dealerId(event), false);
		} catch (e) {
			return failFrom(e);
		}
		return { deactivated: true };
	},
	activate: async (event) => {
		const actor = requireCan(event, 'manageDealers');
		try {
			await setDealerActive(await getDb(), actor, dealerId(event), true);
		} catch (e) {
			return failFrom(e);
		}
		return { activated: true };
	}
};
