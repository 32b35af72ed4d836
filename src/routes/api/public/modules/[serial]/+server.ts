import { json } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getPublicRecord } from '$lib/server/services/modules';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';
import { businessDay } from '$lib/server/services/calendar';

/**
 * The public record of a module as JSON, for anyone (no customer data): the same data the
 * label's page shows, shaped after the public items of a battery passport.
 */
export const GET: RequestHandler = async (event) => {
	allowAnonymous(event);
	try {
		const db = await getDb();
		const record = await getPublicRecord(
			db,
			event.params.serial,
			await businessDay(db, new Date())
		);
		return json(record, { headers: { 'cache-control': 'public, max-age=300' } });
	} catch (e) {
		return jsonFrom(e);
	}
};
