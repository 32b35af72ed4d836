import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listOutbox } from '$lib/server/mail';
import { outboxQuerySchema } from '$lib/schemas/outbox';
import { toIssues } from '$lib/server/validation';
import type { RequestHandler } from './$types';

/** The outbox as JSON for admins and scripts (newest first), by recipient and subject. */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'viewOutbox');
	const parsed = outboxQuerySchema.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success)
		return json(
			{ message: 'Check the outbox filters.', issues: toIssues(parsed.error) },
			{ status: 400 }
		);
	return json({ items: await listOutbox(await getDb(), { ...parsed.data, limit: 500 }) });
};
