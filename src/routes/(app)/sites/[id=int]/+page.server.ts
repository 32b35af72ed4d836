import { requireCan } from '$lib/server/auth/guards';
import { can } from '$lib/policy';
import { getDb } from '$lib/server/db';
import { errorFrom } from '$lib/server/http';
import { getSite } from '$lib/server/services/sites';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	try {
		const site = await getSite(await getDb(), actor, Number(event.params.id));
		return {
			...site,
			canChange: can(actor.role, 'install'),
			created: event.url.searchParams.has('created')
		};
	} catch (e) {
		errorFrom(e);
	}
};
