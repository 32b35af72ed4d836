import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { noticeSchema, traceQuerySchema } from '$lib/schemas/trace';
import { parseForm, parseQuery } from '$lib/server/validation';
import { describeTrace, sendServiceNotice, traceModules } from '$lib/server/services/trace';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

const SHOWN = 500;

export const load: PageServerLoad = async (event) => {
	requireCan(event, 'trace');
	const params = Object.fromEntries(event.url.searchParams);
	if (!Object.keys(params).length) return { query: null, result: null, issues: [] };
	const parsed = parseQuery(traceQuerySchema, event.url.searchParams);
	if (!parsed.ok) return { query: params, result: null, issues: parsed.issues };
	const result = await traceModules(await getDb(), parsed.data);
	return {
		query: params,
		criteria: describeTrace(parsed.data),
		result: { ...result, items: result.items.slice(0, SHOWN) },
		issues: []
	};
};

export const actions: Actions = {
	notice: async (event) => {
		const actor = requireCan(event, 'sendServiceNotice');
		const query = parseQuery(traceQuerySchema, event.url.searchParams);
		if (!query.ok)
			return fail(400, { message: 'The trace criteria are missing; run the trace again.' });
		const parsed = await parseForm(noticeSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			return { sent: await sendServiceNotice(await getDb(), actor, query.data, parsed.data) };
		} catch (e) {
			return failFrom(e, parsed.data);
		}
	}
};
