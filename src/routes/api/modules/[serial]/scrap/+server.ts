import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { scrapSchema } from '$lib/schemas/workshop';
import { parseJson } from '$lib/server/validation';
import { scrapModule } from '$lib/server/services/workshop';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Scraps a module held in the workshop, body `{ reason }`; its passport status becomes waste. */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'scrapModule');
	const parsed = await parseJson(scrapSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: 'The module could not be scrapped.', issues: parsed.issues },
			{ status: 400 }
		);
	try {
		return json(await scrapModule(await getDb(), actor, event.params.serial, parsed.data));
	} catch (e) {
		return jsonFrom(e);
	}
};
