import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getColumnPrefs, setColumnPrefs } from '$lib/server/services/fleet';
import { DEFAULT_FLEET_COLUMNS, fleetColumnsSchema } from '$lib/schemas/fleet';
import { parseJson } from '$lib/server/validation';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

const NO_PERSON = {
	message: 'Column choices are kept per person; sign in with your own account.',
	issues: []
};

/** The fleet table's visible columns for the signed-in person (the defaults until they choose). */
export const GET: RequestHandler = async (event) => {
	const { userId } = requireCan(event, 'viewFleet');
	if (userId === null) return json(NO_PERSON, { status: 403 });
	const saved = await getColumnPrefs(await getDb(), userId);
	return json({ columns: saved ?? DEFAULT_FLEET_COLUMNS, saved: saved !== null });
};

/** Keeps the visible columns: `{ "columns": ["serial", "state", …] }`. */
export const PUT: RequestHandler = async (event) => {
	const { userId } = requireCan(event, 'viewFleet');
	if (userId === null) return json(NO_PERSON, { status: 403 });
	const body = await parseJson(fleetColumnsSchema, event.request);
	if (!body.ok)
		return json(
			{
				message: 'The column choice was not understood. Reload the page and choose again.',
				issues: body.issues
			},
			{ status: 400 }
		);
	try {
		return json({
			columns: await setColumnPrefs(await getDb(), userId, body.data.columns),
			saved: true
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
