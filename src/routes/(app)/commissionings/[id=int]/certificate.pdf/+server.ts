import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { certificateData, certificatePdf } from '$lib/server/services/commissioning';
import { errorFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** The commissioning certificate as a PDF; another dealer's certificate answers 404 like a missing one. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	try {
		const data = await certificateData(await getDb(), actor, Number(event.params.id));
		const pdf = await certificatePdf(data);
		return new Response(pdf as Uint8Array<ArrayBuffer>, {
			headers: {
				'content-type': 'application/pdf',
				'content-length': String(pdf.byteLength),
				'content-disposition': `attachment; filename="${data.certificateNo}.pdf"`,
				'cache-control': 'private, no-store'
			}
		});
	} catch (e) {
		errorFrom(e);
	}
};
