import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listModels } from '$lib/server/services/models';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageModels');
	const includeRetired = event.url.searchParams.get('retired') === 'show';
	return { models: await listModels(await getDb(), { includeRetired }), includeRetired };
};
