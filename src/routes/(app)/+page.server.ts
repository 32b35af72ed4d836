import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { homeFigures } from '$lib/server/services/home';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewHome');
	return { figures: await homeFigures(await getDb(), actor) };
};
