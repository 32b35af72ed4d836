import { requireApiActor } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getImport } from '$lib/server/services/imports';
import { toErrorReportCsv } from '$lib/domain/factory-csv';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** The rejected rows of an import as a CSV a spreadsheet opens safely. */
export const GET: RequestHandler = async (event) => {
	requireApiActor(event, 'importResults', { tokenScope: 'imports' });
	try {
		const result = await getImport(await getDb(), Number(event.params.id));
		const base = result.import.fileName.replace(/\.[^.]+$/, '').replace(/[^A-Za-z0-9._-]+/g, '_');
		return new Response(toErrorReportCsv(result.errors), {
			headers: {
				'content-type': 'text/csv; charset=utf-8',
				'content-disposition': `attachment; filename="${base}-rejected-rows.csv"`
			}
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
