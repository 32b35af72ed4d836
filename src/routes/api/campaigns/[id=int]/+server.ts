import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getCampaign } from '$lib/server/services/campaigns';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** A campaign with `completionPct` and per-dealer counts; a dealer sees its own part only. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'followCampaigns');
	try {
		return json(await getCampaign(await getDb(), actor, Number(event.params.id)));
	} catch (e) {
		return jsonFrom(e);
	}
};
