import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { exportPassports } from '$lib/server/services/passport-export';
import { passportExportSchema } from '$lib/schemas/passport';
import { parseQuery } from '$lib/server/validation';
import { baseUrl } from '$lib/server/base-url';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** Passports of a shipment, cell lot or model as JSON Lines or ZIP, streamed. Assembler staff only. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'exportPassports');
	const parsed = parseQuery(passportExportSchema, event.url.searchParams);
	if (!parsed.ok) {
		const issues = parsed.issues;
		return json({ message: issues[0].message, issues }, { status: 400 });
	}
	try {
		const out = await exportPassports(await getDb(), actor, parsed.data, baseUrl(event.url));
		return new Response(out.stream, {
			headers: {
				'content-type': out.contentType,
				'content-disposition': `attachment; filename="${out.filename}"`,
				'cache-control': 'no-store'
			}
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
