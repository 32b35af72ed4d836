import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { claimFilterOptions } from '$lib/server/services/claims';
import type { PageServerLoad } from './$types';

/** The queue itself is fetched by the page from /api/claims, so filters and sorting stay in the URL. */
export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewClaims');
	return {
		options: await claimFilterOptions(await getDb(), actor),
		dealerScoped: actor.dealerScoped
	};
};
