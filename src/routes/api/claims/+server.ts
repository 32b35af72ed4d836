import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { jsonFrom } from '$lib/server/http';
import { parseJson, parseQuery } from '$lib/server/validation';
import { baseUrl } from '$lib/server/base-url';
import { claimQuerySchema, fileClaimApiSchema } from '$lib/schemas/claim';
import { fileClaim } from '$lib/server/services/claim-filing';
import { listClaims } from '$lib/server/services/claim-queue';
import type { RequestHandler } from './$types';

/** The claims queue as JSON: `?state=&dealer=&model=&minAgeDays=&serial=&page=&pageSize=&sort=&dir=` (`serial`: whole or its beginning). A dealer gets own claims only. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewClaims');
	const parsed = parseQuery(claimQuerySchema, event.url.searchParams);
	if (!parsed.ok) {
		const issues = parsed.issues;
		return json({ message: `Check the filters: ${issues[0].message}`, issues }, { status: 400 });
	}
	try {
		return json(await listClaims(await getDb(), actor, parsed.data));
	} catch (e) {
		return jsonFrom(e);
	}
};

/**
 * Files a claim of any kind: `{ kind: "in-service" | "on-delivery", serials, fault,
 * observedOn, …evidence }` → 201 `{ id, number }`. Another dealer's serial answers 404 like
 * an unknown one; a module the kind does not fit answers 409 saying which kind fits.
 */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'fileClaim');
	const parsed = await parseJson(fileClaimApiSchema, event.request);
	if (!parsed.ok)
		return json(
			{ message: `The claim was not filed: ${parsed.issues[0].message}`, issues: parsed.issues },
			{ status: 400 }
		);
	const { kind, serials, fault, observedOn, throughputScope, log, ...evidence } = parsed.data;
	try {
		const claim = await fileClaim(await getDb(), actor, {
			kind,
			serials,
			fault,
			observedOn,
			evidence,
			throughputScope,
			log,
			baseUrl: baseUrl(event.url)
		});
		return json(claim, { status: 201 });
	} catch (e) {
		return jsonFrom(e);
	}
};
