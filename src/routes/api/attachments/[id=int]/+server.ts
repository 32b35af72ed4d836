import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { readAttachment } from '$lib/server/services/attachments';
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
		const name = attachment.fileName.replace(/[^A-Za-z0-9._-]+/g, '_');
		return new Response(bytes as Uint8Array<ArrayBuffer>, {
			headers: {
				'content-type': contentType,
				'content-length': String(bytes.byteLength),
				'content-disposition': `inline; filename="${name}"`,
				'cache-control': 'private, max-age=3600',
				'x-content-type-options': 'nosniff',
				'content-security-policy': "default-src 'none'"
			}
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
