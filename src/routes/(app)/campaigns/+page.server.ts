import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { can } from '$lib/policy';
import { openCampaignFormSchema } from '$lib/schemas/campaign';
import { parseForm } from '$lib/server/validation';
import { failFrom } from '$lib/server/http';
import { listCampaigns } from '$lib/server/services/campaigns';
import { openCampaign } from '$lib/server/services/campaign-opening';
import { sendDueReminders } from '$lib/server/services/campaign-reminders';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'followCampaigns');
	const q = event.url.searchParams;
	return {
		campaigns: await listCampaigns(await getDb(), actor),
		mayOpen: can(actor.role, 'openCampaign'),
		// A traceability result opens a campaign with its selection filled in.
		preset: Object.fromEntries(
			['lot', 'model', 'builtFrom', 'builtTo', 'importId'].map((k) => [
				k,
				q.get(k)?.slice(0, 40) ?? ''
			])
		)
	};
};

export const actions: Actions = {
	open: async (event) => {
		const actor = requireCan(event, 'openCampaign');
		const parsed = await parseForm(openCampaignFormSchema, event.request);
		if (!parsed.ok)
			return fail(400, { form: 'open', message: parsed.issues[0].message, values: parsed.values });
		let opened;
		try {
			opened = await openCampaign(await getDb(), actor, parsed.data);
		} catch (e) {
			return failFrom(e, { form: 'open' });
		}
		redirect(303, `/campaigns/${opened.id}`);
	},
	remind: async (event) => {
		const actor = requireCan(event, 'openCampaign');
		try {
			return { reminded: await sendDueReminders(await getDb(), actor) };
		} catch (e) {
			return failFrom(e);
		}
	}
};
