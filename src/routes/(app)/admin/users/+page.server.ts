import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { recordId } from '$lib/schemas/fields';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { inviteSchema } from '$lib/schemas/auth';
import { peopleQuerySchema, personPatchSchema } from '$lib/schemas/people';
import { parseForm, parseQuery } from '$lib/server/validation';
import { inviteUser, listOrganisations, resendInvitation } from '$lib/server/services/users';
import { searchPeople, updatePerson } from '$lib/server/services/people';
import { baseUrl } from '$lib/server/base-url';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

const personId = z.object({ id: recordId('Choose a person.') });
const updateForm = personPatchSchema.and(personId);

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageUsers');
	const db = await getDb();
	const raw = Object.fromEntries(event.url.searchParams);
	const parsed = parseQuery(peopleQuerySchema, event.url.searchParams);
	return {
		raw,
		issues: parsed.ok ? [] : parsed.issues,
		users: await searchPeople(db, parsed.ok ? parsed.data : {}),
		organisations: await listOrganisations(db)
	};
};

export const actions: Actions = {
	invite: async (event) => {
		const actor = requireCan(event, 'manageUsers');
		const parsed = await parseForm(inviteSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await inviteUser(await getDb(), actor, parsed.data, baseUrl(event.url));
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		return { invited: parsed.data.email };
	},
	update: async (event) => {
		const actor = requireCan(event, 'manageUsers');
		const parsed = await parseForm(updateForm, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		const { id, ...patch } = parsed.data;
		try {
			const r = await updatePerson(await getDb(), actor, id, patch);
			return { updated: id, changed: r.changed };
		} catch (e) {
			return failFrom(e, { ...parsed.data, editing: id });
		}
	},
	resend: async (event) => {
		const actor = requireCan(event, 'manageUsers');
		const parsed = await parseForm(personId, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await resendInvitation(await getDb(), actor, parsed.data.id, baseUrl(event.url));
		} catch (e) {
			return failFrom(e, parsed.data);
		}
		return { resent: parsed.data.id };
	}
};
