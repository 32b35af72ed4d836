import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { buildSchema } from '$lib/schemas/build';
import { parseJson } from '$lib/server/validation';
import { registerBuild } from '$lib/server/services/builds';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Registers a build; body `{ cellLots: string[], checks: string[], notes? }`, the same schema as the bench form. */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'build');
	const parsed = await parseJson(buildSchema, event.request);
	if (!parsed.ok) return json({ message: 'The build could not be registered.', issues: parsed.issues }, { status: 400 });
	try {
		return json(await registerBuild(await getDb(), actor, event.params.serial, parsed.data), { status: 201 });
	} catch (e) {
		return jsonFrom(e);
	}
};
