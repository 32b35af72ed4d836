import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { campaignActionSchema } from '$lib/schemas/campaign';
import { parseJson } from '$lib/server/validation';
import { actOnCampaignModule } from '$lib/server/services/campaign-steps';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** A step on one campaign module: `{ action: "acknowledge" | "resolve" | "unreachable", outcome?, note? }`. */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'followCampaigns');
	const parsed = await parseJson(campaignActionSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: `Nothing was recorded: ${parsed.issues[0].message}`, issues: parsed.issues },
			{ status: 400 }
		);
	try {
		return json(
			await actOnCampaignModule(
				await getDb(),
				actor,
				Number(event.params.id),
				event.params.serial,
				parsed.data
			)
		);
	} catch (e) {
		return jsonFrom(e);
	}
};
