import { parseFleetQuery } from '$lib/schemas/fleet';
import { loadFromApi } from '$lib/load-api';
import type { FleetPage } from '$lib/components/fleet';
import type { PageLoad } from './$types';

/**
 * The rows of the fleet table come from `GET /api/modules` with the page's own query string:
 * the URL is the view's whole state (a link shares it), the first page is rendered on the
 * server, and a change of filter, sort or page is a navigation that runs this load again.
 * The guard is the API's (`viewFleet`) and the server load's; this load reads nothing else.
 */
export const load: PageLoad = async ({ fetch, url, data, depends }) => {
	depends('app:fleet');
	const parsed = parseFleetQuery(url.searchParams);
	const view = parsed.success
		? parsed.data
		: { page: 1, pageSize: 50, sort: 'builtAt' as const, dir: 'desc' as const };
	const fleet = await loadFromApi<FleetPage>(fetch, `/api/modules${url.search}`);
	return { ...data, view, queryReadable: parsed.success, ...fleet };
};
