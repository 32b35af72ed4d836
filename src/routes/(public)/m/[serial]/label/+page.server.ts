import { fail } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { moduleModels } from '$lib/server/db/schema';
import { findModule } from '$lib/server/services/modules';
import { buildLabel, recordReprint } from '$lib/server/services/labels';
import { reprintSchema } from '$lib/schemas/allocation';
import { parseForm } from '$lib/server/validation';
import { baseUrl } from '$lib/server/base-url';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'allocateSerials');
	const db = await getDb();
	try {
		const mod = await findModule(db, actor, event.params.serial);
		const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, mod.modelId));
		return { label: await buildLabel(model, mod.serial, baseUrl(event.url)) };
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	reprint: async (event) => {
		const actor = requireCan(event, 'allocateSerials');
		const parsed = await parseForm(reprintSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await recordReprint(await getDb(), actor, event.params.serial, parsed.data.reason);
		} catch (e) {
			return failFrom(e);
		}
		return { recorded: true };
	}
};
