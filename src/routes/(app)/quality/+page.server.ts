import { error } from '@sveltejs/kit';
import { z } from 'zod';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { errorFrom } from '$lib/server/http';
import { QUALITY_GROUP_BY, qualityFilters, qualityReport } from '$lib/server/services/quality';
import { qualityTrend } from '$lib/server/services/quality-trend';
import type { PageServerLoad } from './$types';
import { blankToUndefined, queryInt } from '$lib/schemas/fields';
import { parseQuery } from '$lib/server/validation';

// The filters live in the URL (a GET form), so a view can be shared as a link. An empty
// select sends "", which means "not chosen".
const filterSchema = z.object({
	model: queryInt(1, Number.MAX_SAFE_INTEGER, 'The model'),
	group: z.preprocess(
		blankToUndefined,
		z
			.enum(QUALITY_GROUP_BY, { message: 'Group by rig file, week or the whole model.' })
			.default('import')
	),
	import: queryInt(1, Number.MAX_SAFE_INTEGER, 'The rig file'),
	week: z.preprocess(
		blankToUndefined,
		z
			.string()
			.max(8, { error: 'Write the week as 2026-W07.', abort: true })
			.regex(/^\d{4}-W\d{2}$/, 'Write the week as 2026-W07.')
			.optional()
	),
	latest: z.preprocess(blankToUndefined, z.literal('1').optional())
});

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'viewQuality');
	const parsed = parseQuery(filterSchema, event.url.searchParams);
	if (!parsed.ok)
		error(400, `These filters cannot be read: ${parsed.issues.map((i) => i.message).join(' ')}`);
	const q = parsed.data;
	const db = await getDb();
	try {
		const filters = await qualityFilters(db, { modelId: q.model });
		const report =
			filters.modelId === null
				? null
				: await qualityReport(db, {
						modelId: filters.modelId,
						groupBy: q.group,
						importId: q.import,
						week: q.week,
						latestOnly: q.latest === '1'
					});
		const trend = filters.modelId === null ? null : await qualityTrend(db, filters.modelId);
		return {
			filters,
			report,
			trend,
			query: {
				model: filters.modelId,
				group: q.group,
				import: q.import ?? null,
				week: q.week ?? null,
				latest: q.latest === '1'
			}
		};
	} catch (e) {
		errorFrom(e);
	}
};
