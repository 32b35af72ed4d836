import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listOutbox } from '$lib/server/mail';
import { outboxQuerySchema } from '$lib/schemas/outbox';
import { toIssues } from '$lib/server/validation';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'viewOutbox');
	const raw = Object.fromEntries(event.url.searchParams);
	const parsed = outboxQuerySchema.safeParse(raw);
	const fake = !process.env.SMTP_URL;
	if (!parsed.success) return { messages: [], fake, raw, issues: toIssues(parsed.error) };
	return { messages: await listOutbox(await getDb(), parsed.data), fake, raw, issues: [] };
};
