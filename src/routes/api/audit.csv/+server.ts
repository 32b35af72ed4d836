import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { auditQuerySchema } from '$lib/schemas/audit';
import { parseQuery } from '$lib/server/validation';
import { auditCsv } from '$lib/server/services/audit';
import type { RequestHandler } from './$types';

/** The filtered audit trail as CSV. Admin only. */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'viewAudit');
	const parsed = parseQuery(auditQuerySchema, event.url.searchParams);
	if (!parsed.ok)
		return json({ message: 'Check the audit filters.', issues: parsed.issues }, { status: 400 });
	const csv = await auditCsv(await getDb(), parsed.data);
	return new Response(csv, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': 'attachment; filename="packledger-audit.csv"'
		}
	});
};
