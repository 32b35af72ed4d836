import { json } from '@sveltejs/kit';
import { requireApiActor } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { commitImport } from '$lib/server/services/imports';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Stores the accepted rows of a previewed import: all or none. Committing twice stores nothing twice. */
export const POST: RequestHandler = async (event) => {
	const actor = requireApiActor(event, 'importResults', { tokenScope: 'imports' });
	try {
		return json(await commitImport(await getDb(), actor, Number(event.params.id)));
	} catch (e) {
		return jsonFrom(e);
	}
};
