import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listImports, MAX_IMPORT_BYTES } from '$lib/server/services/imports';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'importResults');
	return { imports: await listImports(await getDb()), maxBytes: MAX_IMPORT_BYTES };
};
