import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { issueGrant, listGrants, revokeGrant } from '$lib/server/services/passport-grants';
import { listPassportScopes } from '$lib/server/services/passport-scopes';
import { passportGrantSchema, revokeGrantSchema } from '$lib/schemas/passport';
import { parseForm } from '$lib/server/validation';
import { baseUrl } from '$lib/server/base-url';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'exportPassports');
	const db = await getDb();
	return {
		scopes: await listPassportScopes(db),
		grants: actor.role === 'admin' ? await listGrants(db) : null
	};
};

export const actions: Actions = {
	issue: async (event) => {
		const actor = requireCan(event, 'grantPassportAccess');
		const parsed = await parseForm(passportGrantSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			const g = await issueGrant(await getDb(), actor, parsed.data);
			const base = baseUrl(event.url);
			const target =
				parsed.data.scopeKind === 'module'
					? `${base}/passport/${encodeURIComponent(g.scopeValue)}`
					: `${base}/passport/{serial}`;
			return {
				issued: {
					link: `${target}?access=${g.secret}`,
					expiresAt: g.expiresAt,
					scope: g.scopeValue,
					kind: parsed.data.scopeKind
				}
			};
		} catch (e) {
			return failFrom(e, parsed.data);
		}
	},
	revoke: async (event) => {
		const actor = requireCan(event, 'grantPassportAccess');
		const parsed = await parseForm(revokeGrantSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			await revokeGrant(await getDb(), actor, parsed.data.id);
			return { revoked: parsed.data.id };
		} catch (e) {
			return failFrom(e);
		}
	}
};
