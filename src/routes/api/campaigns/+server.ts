import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { openCampaignSchema } from '$lib/schemas/campaign';
import { parseJson } from '$lib/server/validation';
import { listCampaigns } from '$lib/server/services/campaigns';
import { openCampaign } from '$lib/server/services/campaign-opening';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** The campaigns the caller may see (a dealer: those naming its modules), newest first. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'followCampaigns');
	try {
		return json({ items: await listCampaigns(await getDb(), actor) });
	} catch (e) {
		return jsonFrom(e);
	}
};

/** Opens a campaign: `{ title, notice, remedy, reminderDays?, select: { serials?, lot?, model?, builtFrom?, builtTo?, importId? } }` → 201 `{ id, modules }`. */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'openCampaign');
	const parsed = await parseJson(openCampaignSchema, event.request);
	if (!parsed.ok)
		return json(
			{
				message: `The campaign was not opened: ${parsed.issues[0].message}`,
				issues: parsed.issues
			},
			{ status: 400 }
		);
	try {
		return json(await openCampaign(await getDb(), actor, parsed.data), { status: 201 });
	} catch (e) {
		return jsonFrom(e);
	}
};
