import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { jsonFrom } from '$lib/server/http';
import { getClaim } from '$lib/server/services/claims';
import type { RequestHandler } from './$types';

/** One claim with its modules, timeline and live assessment; another dealer's claim answers 404 like a missing one. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewClaims');
	try {
		return json(await getClaim(await getDb(), actor, Number(event.params.id)));
	} catch (e) {
		return jsonFrom(e);
	}
};
