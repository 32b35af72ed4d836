import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { auditQuerySchema } from '$lib/schemas/audit';
import { parseQuery } from '$lib/server/validation';
import { searchAudit } from '$lib/server/services/audit';
import type { RequestHandler } from './$types';

/** The audit trail, filtered and paged (`items,total,page,pageSize`). Admin only. */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'viewAudit');
	const parsed = parseQuery(auditQuerySchema, event.url.searchParams);
	if (!parsed.ok)
		return json({ message: 'Check the audit filters.', issues: parsed.issues }, { status: 400 });
	return json(await searchAudit(await getDb(), parsed.data));
};
