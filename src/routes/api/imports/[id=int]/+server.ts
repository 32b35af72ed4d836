import { json } from '@sveltejs/kit';
import { requireApiActor } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getImport } from '$lib/server/services/imports';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	requireApiActor(event, 'importResults', { tokenScope: 'imports' });
	try {
		return json(await getImport(await getDb(), Number(event.params.id)));
	} catch (e) {
		return jsonFrom(e);
	}
};
