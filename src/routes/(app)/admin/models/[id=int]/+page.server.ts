import { error, fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { modelInputSchema } from '$lib/schemas/model';
import { parseForm } from '$lib/server/validation';
import { errorFrom, failFrom } from '$lib/server/http';
import {
	deleteModel,
	getModel,
	reinstateModel,
	retireModel,
	updateModel
} from '$lib/server/services/models';
import type { Actions, PageServerLoad } from './$types';

function modelId(event: Pick<RequestEvent, 'params'>): number {
	const id = Number(event.params.id);
	if (!Number.isInteger(id) || id < 1) error(404, 'There is no such module model.');
	return id;
}

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageModels');
	try {
		return { model: await getModel(await getDb(), modelId(event)) };
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	save: async (event) => {
		const actor = requireCan(event, 'manageModels');
		const parsed = await parseForm(modelInputSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			const { warrantyTermsChanged } = await updateModel(
				await getDb(),
				actor,
				modelId(event),
				parsed.data
			);
			return { saved: true, warrantyTermsChanged };
		} catch (e) {
			return failFrom(e, parsed.data);
		}
	},
	retire: async (event) => {
		const actor = requireCan(event, 'manageModels');
		try {
			await retireModel(await getDb(), actor, modelId(event));
			return { retired: true };
		} catch (e) {
			return failFrom(e);
		}
	},
	reinstate: async (event) => {
		const actor = requireCan(event, 'manageModels');
		try {
			await reinstateModel(await getDb(), actor, modelId(event));
			return { reinstated: true };
		} catch (e) {
			return failFrom(e);
		}
	},
	delete: async (event) => {
		const actor = requireCan(event, 'manageModels');
		const form = await event.request.formData();
		if (form.get('sure') !== 'yes')
			return fail(400, { message: 'Tick the box to confirm the deletion first.' });
		try {
			await deleteModel(await getDb(), actor, modelId(event));
		} catch (e) {
			return failFrom(e);
		}
		redirect(303, '/admin/models?deleted');
	}
};
