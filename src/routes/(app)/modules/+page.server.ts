import { redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { searchModules } from '$lib/server/services/modules';
import { parseSerial } from '$lib/domain/serial';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'lookUpModules');
	const q = (event.url.searchParams.get('q') ?? '').trim();
	const exact = q ? parseSerial(q) : null;
	const results = q ? await searchModules(await getDb(), actor, q) : [];
	if (exact?.ok && results.some((r) => r.serial === exact.serial))
		redirect(303, `/m/${exact.serial}`);
	return { q, results, hint: exact && !exact.ok && !results.length ? exact.reason : null };
};
