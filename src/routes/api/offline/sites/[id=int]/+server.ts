import { stringify } from 'devalue';
import { requireCan } from '$lib/server/auth/guards';
import { offlinePack } from '$lib/server/offline-pack';
import type { RequestHandler } from './$types';

/**
 * "Take offline": a site's field pages for the phone (devalue text, so dates stay dates).
 * Each page's own load runs with its own guard and dealer scope: another dealer's site is a 404.
 */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'workOffline');
	const pack = await offlinePack(event, Number(event.params.id));
	return new Response(stringify(pack), {
		headers: { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'no-store' }
	});
};
