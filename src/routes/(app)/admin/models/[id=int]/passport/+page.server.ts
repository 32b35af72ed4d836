import { error, fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getModel } from '$lib/server/services/models';
import { getModelPassportItems, saveModelPassportItems } from '$lib/server/services/passport-items';
import { passportItemsFormSchema } from '$lib/schemas/passport';
import { parseForm } from '$lib/server/validation';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

const idOf = (raw: string) => {
	const id = Number(raw);
	if (!Number.isInteger(id) || id < 1) error(404, 'There is no such module model.');
	return id;
};

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageModels');
	const db = await getDb();
	try {
		const model = await getModel(db, idOf(event.params.id));
		return { model, items: await getModelPassportItems(db, model.id) };
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	save: async (event) => {
		const actor = requireCan(event, 'manageModels');
		const parsed = await parseForm(passportItemsFormSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			const r = await saveModelPassportItems(
				await getDb(),
				actor,
				idOf(event.params.id),
				parsed.data
			);
			return { saved: true, changed: r.changed };
		} catch (e) {
			return failFrom(e, parsed.data);
		}
	}
};
