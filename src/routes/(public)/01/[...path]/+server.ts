import { json } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { moduleForDigitalLink } from '$lib/server/services/resolver';
import { AppError } from '$lib/server/errors';
import { baseUrl } from '$lib/server/base-url';
import { encodeDigitalLinkSegment } from '$lib/domain/gs1';
import {
	LINKSET_MEDIA_TYPE,
	chooseResolution,
	linkHeader,
	linksetDocument,
	moduleLinks,
	parseResolverPath
} from '$lib/domain/resolver';
import type { RequestHandler } from './$types';

/** CORS as the GS1-Conformant Resolver Standard asks (GET, HEAD and OPTIONS from anywhere). */
const CORS = {
	'access-control-allow-origin': '*',
	'access-control-allow-methods': 'GET, HEAD, OPTIONS',
	'access-control-allow-headers': 'Accept, Accept-Language',
	'access-control-expose-headers': 'Link, Location'
};

/** A module label's GS1 Digital Link, /01/{GTIN}/21/{serial}, resolved (see $lib/domain/resolver). */
export const GET: RequestHandler = async (event) => {
	allowAnonymous(event);
	const parsed = parseResolverPath(event.url.pathname.split('/').slice(2));
	if (!parsed.ok) return json({ message: parsed.message }, { status: 400, headers: CORS });
	let serial: string;
	try {
		({ serial } = await moduleForDigitalLink(await getDb(), parsed.gtin, parsed.serial));
	} catch (e) {
		if (e instanceof AppError)
			return json({ message: e.message }, { status: e.status, headers: CORS });
		throw e;
	}
	const base = baseUrl(event.url);
	const links = moduleLinks(base, serial);
	const anchor = `${base}/01/${parsed.gtin}/21/${encodeDigitalLinkSegment(serial)}`;
	const headers = {
		...CORS,
		link: linkHeader(`${anchor}?linkType=all`, links),
		vary: 'Accept, Accept-Language'
	};
	const q = event.url.searchParams;
	const r = chooseResolution(
		links,
		q.get('linkType') ?? q.get('linktype'),
		event.request.headers.get('accept')
	);
	if (r.kind === 'redirect')
		return new Response(null, { status: 307, headers: { ...headers, location: r.location } });
	if (r.kind === 'no-such-link') return json({ message: r.message }, { status: 404, headers });
	return new Response(JSON.stringify(linksetDocument(anchor, links)), {
		status: 200,
		headers: { ...headers, 'content-type': LINKSET_MEDIA_TYPE }
	});
};

export const OPTIONS: RequestHandler = async (event) => {
	allowAnonymous(event);
	return new Response(null, { status: 204, headers: CORS });
};
