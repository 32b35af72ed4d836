import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { claimFilterOptions } from '$lib/server/services/claim-queue';
import type { PageServerLoad } from './$types';

/** Filter choices only: the queue itself comes from /api/claims through +page.ts, so filters and sorting stay in the URL. */
export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewClaims');
	return {
		options: await claimFilterOptions(await getDb(), actor),
		dealerScoped: actor.dealerScoped
	};
};
