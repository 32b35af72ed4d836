import { error } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { errorFrom } from '$lib/server/http';
import { reliabilityQuerySchema } from '$lib/schemas/reliability';
import { reliabilityReport } from '$lib/server/services/reliability';
import type { PageServerLoad } from './$types';

// Filters live in the URL (a GET form), so a view can be shared as a link.
export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewReliability');
	const parsed = reliabilityQuerySchema.safeParse({
		by: 'lot',
		...Object.fromEntries(event.url.searchParams)
	});
	if (!parsed.success)
		error(
			400,
			`These filters cannot be read: ${parsed.error.issues.map((i) => i.message).join(' ')}`
		);
	try {
		return { report: await reliabilityReport(await getDb(), actor, parsed.data) };
	} catch (e) {
		errorFrom(e);
	}
};
