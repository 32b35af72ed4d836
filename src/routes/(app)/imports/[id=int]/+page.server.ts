import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getImport, importResults } from '$lib/server/services/imports';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'importResults');
	const db = await getDb();
	try {
		const id = Number(event.params.id);
		return { result: await getImport(db, id), results: await importResults(db, id) };
	} catch (e) {
		errorFrom(e);
	}
};
