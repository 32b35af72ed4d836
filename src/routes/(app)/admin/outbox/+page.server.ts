import { requireRole } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listOutbox } from '$lib/server/mail';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRole(event, 'admin');
	return { messages: await listOutbox(await getDb()), fake: !process.env.SMTP_URL };
};
