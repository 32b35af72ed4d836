import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { peopleQuerySchema } from '$lib/schemas/people';
import { parseQuery } from '$lib/server/validation';
import { personForApi, searchPeople } from '$lib/server/services/people';
import type { RequestHandler } from './$types';

/** People with their role, organisation, status and last sign-in. Admin only. */
export const GET: RequestHandler = async (event) => {
	requireCan(event, 'manageUsers');
	const parsed = parseQuery(peopleQuerySchema, event.url.searchParams);
	if (!parsed.ok)
		return json({ message: 'Check the filters.', issues: parsed.issues }, { status: 400 });
	const people = await searchPeople(await getDb(), parsed.data);
	return json({ items: people.map(personForApi) });
};
