import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { reworkSchema } from '$lib/schemas/workshop';
import { parseJson } from '$lib/server/validation';
import { reworkModule } from '$lib/server/services/workshop';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Records a rework, body `{ work }`: the module goes back to built and waits for a retest. */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'reworkModule');
	const parsed = await parseJson(reworkSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: 'The rework could not be recorded.', issues: parsed.issues },
			{ status: 400 }
		);
	try {
		return json(await reworkModule(await getDb(), actor, event.params.serial, parsed.data));
	} catch (e) {
		return jsonFrom(e);
	}
};
