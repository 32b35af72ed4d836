import { json } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { resolverDescription } from '$lib/domain/resolver';
import { baseUrl } from '$lib/server/base-url';
import type { RequestHandler } from './$types';

/** The resolver description file of the GS1-Conformant Resolver Standard. */
export const GET: RequestHandler = async (event) => {
	allowAnonymous(event);
	return json(resolverDescription(baseUrl(event.url), 'Packledger module register resolver'), {
		headers: { 'access-control-allow-origin': '*', 'cache-control': 'public, max-age=3600' }
	});
};
