import { loadFromApi } from '$lib/load-api';
import type { ClaimItem } from '$lib/components/claims/claims-table.svelte';
import type { PageLoad } from './$types';

export type ClaimQueuePage = { items: ClaimItem[]; total: number; page: number; pageSize: number };

/**
 * The claims queue comes from `GET /api/claims` with the page's own query string, so the
 * queue in the URL is exactly what the API answers; the first page is rendered on the server
 * and each change of filter, sort or page is a navigation that runs this load again. The
 * guard is the API's (`viewClaims`) and the server load's.
 */
export const load: PageLoad = async ({ fetch, url, data }) => {
	const queue = await loadFromApi<ClaimQueuePage>(fetch, `/api/claims${url.search}`);
	return { ...data, ...queue };
};
