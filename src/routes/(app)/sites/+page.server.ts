import { requireRole } from '$lib/server/auth/guards';
import { hasRole } from '$lib/roles';
import { getDb } from '$lib/server/db';
import { listSites } from '$lib/server/services/sites';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireRole(event, 'field_tech', 'dealer', 'admin', 'warranty');
	const q = (event.url.searchParams.get('q') ?? '').slice(0, 80);
	return {
		q,
		sites: await listSites(await getDb(), actor, { q }),
		canCreate: hasRole(actor.role, ['field_tech', 'admin'])
	};
};
