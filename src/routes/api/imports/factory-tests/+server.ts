import { json } from '@sveltejs/kit';
import { requireApiActor } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { commitImport, MAX_IMPORT_BYTES, previewImport } from '$lib/server/services/imports';
import { readUploadedText } from '$lib/server/upload';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * Sends a rig CSV (body `text/csv`, or multipart field `file`). Answers the preview;
 * with `?commit=accepted` it also stores the accepted rows in the same call.
 */
export const POST: RequestHandler = async (event) => {
	const actor = requireApiActor(event, 'importResults', { tokenScope: 'imports' });
	const file = await readUploadedText(event.request, event.url, MAX_IMPORT_BYTES);
	const db = await getDb();
	try {
		const preview = await previewImport(db, actor, file);
		if (event.url.searchParams.get('commit') !== 'accepted')
			return json(preview, { status: preview.alreadySent ? 200 : 201 });
		const committed = await commitImport(db, actor, preview.import.id);
		return json({ ...committed, alreadySent: preview.alreadySent || committed.alreadySent });
	} catch (e) {
		return jsonFrom(e);
	}
};
