import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { verifyCertificate } from '$lib/server/services/certificate-verification';
import type { PageServerLoad } from './$types';

/** Where a certificate's QR code leads: anyone may check that it is genuine and unchanged. */
export const load: PageServerLoad = async (event) => {
	allowAnonymous(event);
	const h = event.url.searchParams.get('h');
	// A SHA-256 in hex is 64 characters; anything longer or stranger is treated as a wrong hash.
	const given = h === null ? null : h.length === 64 && /^[0-9a-fA-F]+$/.test(h) ? h : 'malformed';
	return {
		verification: await verifyCertificate(await getDb(), event.params.certificateNo, given)
	};
};
