import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { traceQuerySchema } from '$lib/schemas/trace';
import { parseQuery } from '$lib/server/validation';
import { traceJsonBytes } from '$lib/server/services/trace';
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
	// Built as JSON text by SQLite (one value for 1,500 modules), sent as the bytes kept with it.
	return new Response(await traceJsonBytes(await getDb(), parsed.data), {
		headers: { 'content-type': 'application/json' }
	});
};
