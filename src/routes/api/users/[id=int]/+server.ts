import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { personPatchSchema } from '$lib/schemas/people';
import { parseJson } from '$lib/server/validation';
import { jsonFrom } from '$lib/server/http';
import { personForApi, searchPeople, updatePerson } from '$lib/server/services/people';
import type { RequestHandler } from './$types';

/** Changes a person's role, organisation or active flag (`{ role?, organisationId?, active? }`). Admin only. */
export const PATCH: RequestHandler = async (event) => {
	const actor = requireCan(event, 'manageUsers');
	const parsed = await parseJson(personPatchSchema, event.request);
	if (!parsed.ok)
		return json({ message: 'Check the change.', issues: parsed.issues }, { status: 400 });
	const id = Number(event.params.id);
	const db = await getDb();
	try {
		const { changed } = await updatePerson(db, actor, id, parsed.data);
		const [person] = await searchPeople(db, { id });
		return json({ ...personForApi(person), changed });
	} catch (e) {
		return jsonFrom(e);
	}
};
