import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listAudit } from '$lib/server/services/audit';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'viewAudit');
	const entity = event.url.searchParams.get('entity') ?? undefined;
	return { entries: await listAudit(await getDb(), { entity }), entity };
};
