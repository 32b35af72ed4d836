import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { parseJson } from '$lib/server/validation';
import { assessRequestSchema } from '$lib/schemas/warranty-assess';
import { assessClaim } from '$lib/domain/warranty';
import type { RequestHandler } from './$types';

/**
 * Computes a warranty assessment from the figures in the body (no database): the claim
 * page's what-if panel calls it as the officer edits the evidence. Answers assessClaim's
 * result: recommendation, term, cycles, retention and every reason sentence.
 */
export const POST: RequestHandler = async (event) => {
	requireCan(event, 'viewClaims');
	const parsed = await parseJson(assessRequestSchema, event.request);
	if (!parsed.ok)
		return json(
			{
				message: `Check the figures: ${parsed.issues[0]?.message ?? 'the request could not be read.'}`,
				issues: parsed.issues
			},
			{ status: 400 }
		);
	try {
		return json(assessClaim(parsed.data));
	} catch (e) {
		// The domain refuses figures it cannot assess (e.g. a hot point no colder than the reference).
		if (e instanceof RangeError) return json({ message: e.message, issues: [] }, { status: 400 });
		throw e;
	}
};
