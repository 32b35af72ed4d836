import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { systemSchema } from '$lib/schemas/site';
import { parseForm } from '$lib/server/validation';
import { errorFrom, failFrom } from '$lib/server/http';
import { createSystem, systemFormOptions } from '$lib/server/services/systems';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'install');
	try {
		return await systemFormOptions(await getDb(), actor, Number(event.params.id));
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireCan(event, 'install');
		const parsed = await parseForm(systemSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		let id: number;
		try {
			// The design is checked again here: a string outside the inverter's window is refused.
			({ id } = await createSystem(await getDb(), actor, Number(event.params.id), parsed.data));
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		redirect(303, `/systems/${id}?created`);
	}
};
