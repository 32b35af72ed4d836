import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { dealerMarketSchema, ruleSetFormSchema } from '$lib/schemas/rule-set';
import { parseForm } from '$lib/server/validation';
import { addRuleSetVersion, ruleSetsPage, setDealerMarket } from '$lib/server/services/rule-sets';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'manageRuleSets');
	try {
		return await ruleSetsPage(await getDb(), actor, event.url.searchParams.get('market'));
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	add: async (event) => {
		const actor = requireCan(event, 'manageRuleSets');
		const parsed = await parseForm(ruleSetFormSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			const added = await addRuleSetVersion(await getDb(), actor, parsed.data);
			return { added: { market: added.market, version: added.version } };
		} catch (e) {
			return failFrom(e);
		}
	},
	market: async (event) => {
		const actor = requireCan(event, 'manageRuleSets');
		const parsed = await parseForm(dealerMarketSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues });
		try {
			await setDealerMarket(await getDb(), actor, parsed.data.dealerOrgId, parsed.data.market);
			return { assigned: true };
		} catch (e) {
			return failFrom(e);
		}
	}
};
