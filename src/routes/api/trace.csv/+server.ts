import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { traceQuerySchema } from '$lib/schemas/trace';
import { parseQuery } from '$lib/server/validation';
import { traceCsv } from '$lib/server/services/trace';
import type { RequestHandler } from './$types';
import { businessDay } from '$lib/server/services/calendar';

/** The traced modules and where each is now, as CSV. */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'trace');
	const parsed = parseQuery(traceQuerySchema, event.url.searchParams);
	if (!parsed.ok)
		return json(
			{
				message: parsed.issues[0]?.message ?? 'Give a cell lot, model, build date range or import.',
				issues: parsed.issues
			},
			{ status: 400 }
		);
	const db = await getDb();
	const csv = await traceCsv(db, parsed.data);
	const today = await businessDay(db, new Date());
	return new Response(csv, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="packledger-trace-${today}.csv"`
		}
	});
};
