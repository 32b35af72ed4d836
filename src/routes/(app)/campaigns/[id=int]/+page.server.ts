import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { campaignActionSchema } from '$lib/schemas/campaign';
import { errorFrom, failFrom } from '$lib/server/http';
import { actOnCampaignModule } from '$lib/server/services/campaign-steps';
import { getCampaign, listCampaignModules } from '$lib/server/services/campaigns';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'followCampaigns');
	const db = await getDb();
	try {
		const id = Number(event.params.id);
		return {
			campaign: await getCampaign(db, actor, id),
			...(await listCampaignModules(db, actor, id))
		};
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	act: async (event) => {
		const actor = requireCan(event, 'followCampaigns');
		const form = await event.request.formData();
		const serial = String(form.get('serial') ?? '').slice(0, 40);
		const parsed = campaignActionSchema.safeParse(Object.fromEntries(form));
		if (!parsed.success) return fail(400, { serial, message: parsed.error.issues[0].message });
		try {
			return {
				done: await actOnCampaignModule(
					await getDb(),
					actor,
					Number(event.params.id),
					serial,
					parsed.data
				)
			};
		} catch (e) {
			return failFrom(e, { serial });
		}
	}
};
