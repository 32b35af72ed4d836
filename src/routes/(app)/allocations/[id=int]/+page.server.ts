import { error } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { labelsForAllocation } from '$lib/server/services/labels';
import { baseUrl } from '$lib/server/base-url';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'allocateSerials');
	const id = Number(event.params.id);
	if (!Number.isInteger(id)) error(404, 'No such allocation.');
	try {
		const { allocation, model, labels } = await labelsForAllocation(
			await getDb(),
			id,
			baseUrl(event.url),
			6
		);
		return {
			allocation,
			model: { code: model.code, name: model.name },
			labels,
			total: allocation.count
		};
	} catch (e) {
		errorFrom(e);
	}
};
