import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { parseJson } from '$lib/server/validation';
import { weibullRequestSchema } from '$lib/schemas/reliability';
import { fitWeibull, readShape, WEIBULL_BOUNDS_METHOD } from '$lib/domain/reliability';
import type { RequestHandler } from './$types';

/**
 * Fits a two-parameter Weibull by maximum likelihood to `{ times, censored }` (censored =
 * still running at that time): `{ beta, eta, failures, censored, betaCI95, etaCI95 }`, with
 * the bounds' method and a sentence on β. Fewer than two failures: 422 with the reason.
 */
export const POST: RequestHandler = async (event) => {
	requireCan(event, 'viewReliability');
	const parsed = await parseJson(weibullRequestSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: `Check the data: ${parsed.issues[0]?.message}`, issues: parsed.issues },
			{ status: 400 }
		);
	const fit = fitWeibull(parsed.data.times, parsed.data.censored);
	if (!fit.ok)
		return json(
			{ message: fit.reason, failures: fit.failures, censored: fit.censored, issues: [] },
			{ status: 422 }
		);
	const { beta, eta, failures, censored, betaCI95, etaCI95, logLikelihood } = fit;
	return json({
		beta,
		eta,
		failures,
		censored,
		betaCI95,
		etaCI95,
		logLikelihood,
		boundsMethod: WEIBULL_BOUNDS_METHOD,
		reading: readShape(fit).sentence
	});
};
