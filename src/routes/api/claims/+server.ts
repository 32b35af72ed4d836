import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { jsonFrom } from '$lib/server/http';
import { parseQuery } from '$lib/server/validation';
import { claimQuerySchema } from '$lib/schemas/claim';
import { listClaims } from '$lib/server/services/claims';
import type { RequestHandler } from './$types';

/** The claims queue as JSON: `?state=&dealer=&model=&minAgeDays=&page=&pageSize=&sort=&dir=`. A dealer gets own claims only. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewClaims');
	const parsed = parseQuery(claimQuerySchema, event.url.searchParams);
	if (!parsed.ok) {
		const issues = parsed.issues;
		return json({ message: `Check the filters: ${issues[0].message}`, issues }, { status: 400 });
	}
	try {
		return json(await listClaims(await getDb(), actor, parsed.data));
	} catch (e) {
		return jsonFrom(e);
	}
};
