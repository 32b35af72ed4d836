import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { readAttachment, safeFileName } from '$lib/server/services/attachments';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/** The stored file of an attachment; another dealer's attachment answers 404 like a missing one. */
export const GET: RequestHandler = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	try {
		const { attachment, bytes, contentType } = await readAttachment(
			await getDb(),
			actor,
			Number(event.params.id)
		);
		// Served under a name whose extension is that of the detected type, whatever was sent.
		const name = safeFileName(attachment.fileName, contentType);
		return new Response(bytes as Uint8Array<ArrayBuffer>, {
			headers: {
				'content-type': contentType,
				'content-length': String(bytes.byteLength),
				'content-disposition': `${contentType.startsWith('image/') ? 'inline' : 'attachment'}; filename="${name}"`,
				'cache-control': 'private, max-age=3600',
				'x-content-type-options': 'nosniff',
				'content-security-policy': "default-src 'none'"
			}
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
