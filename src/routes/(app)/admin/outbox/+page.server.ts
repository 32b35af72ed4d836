import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { listOutbox } from '$lib/server/mail';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'viewOutbox');
	return { messages: await listOutbox(await getDb()), fake: !process.env.SMTP_URL };
};
