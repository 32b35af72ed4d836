import { json } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getPublicRecord } from '$lib/server/services/modules';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * The public record of a module as JSON, for anyone (no customer data): the same data the
 * label's page shows, shaped after the public items of a battery passport.
 */
export const GET: RequestHandler = async (event) => {
	allowAnonymous(event);
	try {
		const record = await getPublicRecord(
			await getDb(),
			event.params.serial,
			new Date().toISOString().slice(0, 10)
		);
		return json(record, { headers: { 'cache-control': 'public, max-age=300' } });
	} catch (e) {
		return jsonFrom(e);
	}
};
