import { error, fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { labelsForAllocation, recordSheetPrinted } from '$lib/server/services/labels';
import { printedSchema } from '$lib/schemas/allocation';
import { parseForm } from '$lib/server/validation';
import { baseUrl } from '$lib/server/base-url';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

/** Server-rendered only: the sheet's QR codes are sent once, not again as hydration data. */
export const csr = false;

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'allocateSerials');
	const id = Number(event.params.id);
	if (!Number.isInteger(id)) error(404, 'No such allocation.');
	const format = event.url.searchParams.get('format') === 'roll' ? 'roll' : 'a4';
	try {
		const { allocation, labels } = await labelsForAllocation(await getDb(), id, baseUrl(event.url));
		return { allocation, labels, format };
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	printed: async (event) => {
		const actor = requireCan(event, 'allocateSerials');
		const parsed = await parseForm(printedSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues });
		try {
			await recordSheetPrinted(await getDb(), actor, Number(event.params.id), parsed.data.format);
		} catch (e) {
			return failFrom(e);
		}
		return { recorded: true };
	}
};
