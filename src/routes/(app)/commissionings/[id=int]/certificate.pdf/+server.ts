import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { certificatePdfFor } from '$lib/server/services/certificates';
import { errorFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** The commissioning certificate as a PDF; another dealer's certificate answers 404 like a missing one. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	try {
		const { pdf, certificateNo } = await certificatePdfFor(
			await getDb(),
			actor,
			Number(event.params.id)
		);
		return new Response(pdf as Uint8Array<ArrayBuffer>, {
			headers: {
				'content-type': 'application/pdf',
				'content-length': String(pdf.byteLength),
				'content-disposition': `attachment; filename="${certificateNo}.pdf"`,
				'cache-control': 'private, no-store'
			}
		});
	} catch (e) {
		errorFrom(e);
	}
};
