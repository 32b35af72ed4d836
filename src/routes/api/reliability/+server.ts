import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { parseQuery } from '$lib/server/validation';
import { reliabilityQuerySchema } from '$lib/schemas/reliability';
import { reliabilityReport } from '$lib/server/services/reliability';
import type { RequestHandler } from './$types';

/**
 * The fleet's reliability for a selection (`asOf`, `model`, `lot`, `dealer`, `buildMonth`,
 * `application`, `climate`, `basis=covered|all`, `by=<dimension>` for per-slice rates):
 * `{ unitsInService, unitYears, claims, ratePer1000UnitYears, rateCI95, weibull, reserve }`
 * plus the probability plot, the assumptions and the slices.
 */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewReliability');
	const parsed = parseQuery(reliabilityQuerySchema, event.url.searchParams);
	if (!parsed.ok) {
		const issues = parsed.issues;
		return json({ message: `Check the query: ${issues[0].message}`, issues }, { status: 400 });
	}
	const {
		options: _o,
		dimensions: _d,
		...report
	} = await reliabilityReport(await getDb(), actor, parsed.data);
	return json(report);
};
