import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { returnActionSchema } from '$lib/schemas/returns';
import { parseJson } from '$lib/server/validation';
import { actOnReturn, findReturn } from '$lib/server/services/returns';
import { jsonFrom } from '$lib/server/http';
import { baseUrl } from '$lib/server/base-url';
import type { RequestHandler } from './$types';

/** Where the module's return stands: its number, claim, step and the actions open now. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'handleReturn');
	try {
		return json(await findReturn(await getDb(), actor, event.params.serial, baseUrl(event.url)));
	} catch (e) {
		return jsonFrom(e);
	}
};

/**
 * The next step of a return, body `{ action: "receive" | "inspect" | "rework" | "keep" |
 * "scrap", … }`: `condition` (and `note`) on receipt, `findings` and `cause` on inspection,
 * `work` for rework, `note` to keep, `reason` to scrap.
 */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'handleReturn');
	const parsed = await parseJson(returnActionSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: 'The step of the return could not be recorded.', issues: parsed.issues },
			{ status: 400 }
		);
	try {
		const db = await getDb();
		return json(await actOnReturn(db, actor, event.params.serial, parsed.data, baseUrl(event.url)));
	} catch (e) {
		return jsonFrom(e);
	}
};
