import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listOutbox } from '$lib/server/mail';
import type { RequestHandler } from './$types';

/** The outbox as JSON for admins and scripts (newest first). */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'viewOutbox');
	const to = event.url.searchParams.get('to');
	const messages = await listOutbox(await getDb(), 500);
	return json({ items: to ? messages.filter((m) => m.toAddr.includes(to)) : messages });
};
