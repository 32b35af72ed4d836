import { requireRole } from '$lib/server/auth/guards';
import { hasRole } from '$lib/roles';
import { getDb } from '$lib/server/db';
import { errorFrom } from '$lib/server/http';
import { getSite } from '$lib/server/services/sites';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireRole(event, 'field_tech', 'dealer', 'admin', 'warranty');
	try {
		const site = await getSite(await getDb(), actor, Number(event.params.id));
		return {
			...site,
			canChange: hasRole(actor.role, ['field_tech', 'admin']),
			created: event.url.searchParams.has('created')
		};
	} catch (e) {
		errorFrom(e);
	}
};
