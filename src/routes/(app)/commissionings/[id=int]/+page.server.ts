import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { certificateData } from '$lib/server/services/certificates';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	try {
		return { certificate: await certificateData(await getDb(), actor, Number(event.params.id)) };
	} catch (e) {
		errorFrom(e);
	}
};
