import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { siteSchema } from '$lib/schemas/site';
import { parseForm } from '$lib/server/validation';
import { failFrom } from '$lib/server/http';
import { createSite, siteFormOptions } from '$lib/server/services/sites';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'install');
	return siteFormOptions(await getDb(), actor);
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireCan(event, 'install');
		const parsed = await parseForm(siteSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		let id: number;
		try {
			id = await createSite(await getDb(), actor, parsed.data);
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/sites/${id}?created`);
	}
};
