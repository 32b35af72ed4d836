import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { parseJson } from '$lib/server/validation';
import { rateRequestSchema } from '$lib/schemas/reliability';
import { claimRate } from '$lib/domain/reliability';
import type { RequestHandler } from './$types';

/**
 * `{ events, exposure }` → `{ ratePer1000, ci95 }`: events per 1,000 units of exposure with
 * the exact Poisson (Garwood) 95 % interval.
 */
export const POST: RequestHandler = async (event) => {
	requireCan(event, 'viewReliability');
	const parsed = await parseJson(rateRequestSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: `Check the figures: ${parsed.issues[0]?.message}`, issues: parsed.issues },
			{ status: 400 }
		);
	return json(claimRate(parsed.data.events, parsed.data.exposure));
};
