import { requireCan } from '$lib/server/auth/guards';
import { can } from '$lib/policy';
import { getDb } from '$lib/server/db';
import { listSites } from '$lib/server/services/sites';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	const q = (event.url.searchParams.get('q') ?? '').slice(0, 80);
	return {
		q,
		sites: await listSites(await getDb(), actor, { q }),
		canCreate: can(actor.role, 'install')
	};
};
