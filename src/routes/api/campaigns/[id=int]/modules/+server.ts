import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listCampaignModules } from '$lib/server/services/campaigns';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** The campaign's modules as `items`, each with its step, who and when; a dealer gets its own. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'followCampaigns');
	try {
		return json(await listCampaignModules(await getDb(), actor, Number(event.params.id)));
	} catch (e) {
		return jsonFrom(e);
	}
};
