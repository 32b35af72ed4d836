import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { createToken, listTokens, revokeToken } from '$lib/server/services/tokens';
import { revokeSchema, tokenSchema } from '$lib/schemas/token';
import { parseForm } from '$lib/server/validation';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'manageTokens');
	return { tokens: await listTokens(await getDb()) };
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireCan(event, 'manageTokens');
		const parsed = await parseForm(tokenSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		const { secret } = await createToken(await getDb(), actor, parsed.data.name);
		return { secret, name: parsed.data.name };
	},
	revoke: async (event) => {
		const actor = requireCan(event, 'manageTokens');
		const parsed = await parseForm(revokeSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues });
		try {
			await revokeToken(await getDb(), actor, parsed.data.id);
		} catch (e) {
			return failFrom(e);
		}
		return { revoked: true };
	}
};
