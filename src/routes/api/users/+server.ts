import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { peopleQuerySchema } from '$lib/schemas/people';
import { toIssues } from '$lib/server/validation';
import { personForApi, searchPeople } from '$lib/server/services/people';
import type { RequestHandler } from './$types';

/** People with their role, organisation, status and last sign-in. Admin only. */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'manageUsers');
	const parsed = peopleQuerySchema.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success)
		return json({ message: 'Check the filters.', issues: toIssues(parsed.error) }, { status: 400 });
	const people = await searchPeople(await getDb(), parsed.data);
	return json({ items: people.map(personForApi) });
};
