import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { baseUrl } from '$lib/server/base-url';
import { jsonFrom } from '$lib/server/http';
import { readJsonBounded } from '$lib/server/validation';
import { toIssues } from '$lib/server/validation';
import { MAX_SYNC_BYTES, syncRequestSchema } from '$lib/schemas/sync';
import { applyOperations } from '$lib/server/services/sync';
import type { RequestHandler } from './$types';

/** Changes a phone made offline, each applied once, in order: see `src/lib/schemas/sync.ts`. */
export const POST: RequestHandler = async (event) => {
	const actor = requireCan(event, 'workOffline');
	const body = await readJsonBounded(event.request, MAX_SYNC_BYTES, 'a sync request');
	if (!body.ok) return json({ message: body.message, issues: [] }, { status: body.status });
	const parsed = syncRequestSchema.safeParse(body.value);
	if (!parsed.success) {
		const issues = toIssues(parsed.error);
		return json(
			{ message: issues[0]?.message ?? 'Invalid sync request.', issues },
			{ status: 400 }
		);
	}
	try {
		const results = await applyOperations(await getDb(), actor, parsed.data.operations, {
			baseUrl: baseUrl(event.url)
		});
		return json({ results });
	} catch (e) {
		return jsonFrom(e);
	}
};
