import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { calendarSettingsSchema } from '$lib/schemas/organisation';
import { parseForm } from '$lib/server/validation';
import { assemblerCalendar, updateAssemblerCalendar } from '$lib/server/services/calendar';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageCalendar');
	return { settings: await assemblerCalendar(await getDb()), now: Date.now() };
};

export const actions: Actions = {
	default: async (event) => {
		const actor = requireCan(event, 'manageCalendar');
		const parsed = await parseForm(calendarSettingsSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await updateAssemblerCalendar(await getDb(), actor, parsed.data);
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		return { saved: true };
	}
};
