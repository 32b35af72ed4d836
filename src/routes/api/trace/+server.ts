import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { traceQuerySchema } from '$lib/schemas/trace';
import { parseQuery } from '$lib/server/validation';
import { traceModules } from '$lib/server/services/trace';
import type { RequestHandler } from './$types';

/** Affected modules of a cell lot / model / build range / import, with counts per dealer. */
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
	const r = await traceModules(await getDb(), parsed.data);
	return json({
		total: r.total,
		truncated: r.truncated,
		byDealer: r.byDealer,
		items: r.items.map(({ id: _id, dealerId: _d, ...rest }) => rest)
	});
};
