import { json } from '@sveltejs/kit';
import { requireApiActor } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { commitImport, MAX_IMPORT_BYTES, previewImport } from '$lib/server/services/imports';
import { readUploadedText } from '$lib/server/upload';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * Sends a rig CSV (body `text/csv`, or multipart field `file`). Answers the preview;
 * with `?commit=accepted` it also stores the accepted rows in the same call, and the answer's
 * `storedNow` says whether this call stored them (`alreadySent`: they were stored before).
 */
export const POST: RequestHandler = async (event) => {
	const actor = requireApiActor(event, 'importResults', { tokenScope: 'imports' });
	const file = await readUploadedText(event.request, event.url, MAX_IMPORT_BYTES);
	const db = await getDb();
	try {
		const storeToo = event.url.searchParams.get('commit') === 'accepted';
		const { committed: storedWithPreview, ...preview } = await previewImport(
			db,
			actor,
			file,
			undefined,
			{ commit: storeToo }
		);
		if (!storeToo) return json(preview, { status: preview.alreadySent ? 200 : 201 });
		const committed = storedWithPreview
			? { ...preview, alreadySent: false }
			: await commitImport(db, actor, preview.import.id);
		// Say what this call did: alreadySent only when the rows had been stored before and
		// nothing was stored now; a file previewed earlier and stored now is not "already sent".
		return json(
			{ ...committed, storedNow: !committed.alreadySent },
			{ status: committed.alreadySent ? 200 : 201 }
		);
	} catch (e) {
		return jsonFrom(e);
	}
};
