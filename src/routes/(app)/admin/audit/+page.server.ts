import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { auditQuerySchema } from '$lib/schemas/audit';
import { parseQuery } from '$lib/server/validation';
import { auditFacets, searchAudit } from '$lib/server/services/audit';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'viewAudit');
	const db = await getDb();
	const raw = Object.fromEntries(event.url.searchParams);
	const parsed = parseQuery(auditQuerySchema, event.url.searchParams);
	const facets = await auditFacets(db);
	if (!parsed.ok) return { ...facets, raw, issues: parsed.issues, result: null };
	return { ...facets, raw, issues: [], result: await searchAudit(db, parsed.data) };
};
