import { randomBytes } from 'node:crypto';
import type { Handle } from '@sveltejs/kit';
import { version } from '$app/environment';
import { getDb } from '$lib/server/db';
import { getPublicRecord, publicRecordEtag } from '$lib/server/services/modules';
import { businessDay } from '$lib/server/services/calendar';

/**
 * What a label's QR code opens, for anyone not signed in: `/m/<serial>`. The page is the
 * same for everyone until the record changes, so it is rendered once per validator (the
 * ETag: a hash of the record and the build, the record itself kept per data version) and
 * sent again from memory. A rescan that brings the validator gets 304 without a body.
 *
 * The page's inline script carries the CSP nonce SvelteKit made when it rendered; a kept
 * page would repeat it, so each answer gets a fresh nonce (16 random bytes, as SvelteKit's
 * own) written in place of the old one in the body and the Content-Security-Policy header
 * (W3C CSP Level 3 §7.1: a nonce must be unique to each response).
 */
type Kept = { etag: string; nonce: string; body: string; headers: [string, string][] };
const pages = new Map<string, Kept>();
const MAX_PAGES = 2000;

const SERIAL_PATH = /^\/m\/([A-Za-z0-9-]{1,40})\/?$/;

export const publicPage: Handle = async ({ event, resolve }) => {
	const { pathname, search } = event.url;
	if (
		event.locals.user ||
		event.request.method !== 'GET' ||
		search !== '' ||
		pathname.length > 60 ||
		!pathname.startsWith('/m/')
	)
		return resolve(event);
	const serial = SERIAL_PATH.exec(pathname)?.[1];
	if (!serial) return resolve(event);
	let etag: string;
	try {
		const db = await getDb();
		const record = await getPublicRecord(db, serial, await businessDay(db, new Date()));
		etag = publicRecordEtag(record, version);
	} catch {
		// An unknown serial: the page itself answers with its 404.
		return resolve(event);
	}
	const tag = event.request.headers.get('if-none-match');
	if (tag && tag.split(',').some((t) => t.trim() === etag))
		return new Response(null, {
			status: 304,
			headers: { etag, 'cache-control': 'public, no-cache', vary: 'Cookie' }
		});
	const hit = pages.get(serial);
	if (hit && hit.etag === etag) return answer(hit);
	const response = await resolve(event);
	const csp = response.headers.get('content-security-policy') ?? '';
	const nonce = /'nonce-([A-Za-z0-9+/=]{16,64})'/.exec(csp)?.[1];
	// Only the page as everyone sees it is kept: 200, the validator just computed, a nonce to renew.
	if (response.status !== 200 || response.headers.get('etag') !== etag || !nonce) return response;
	const kept: Kept = {
		etag,
		nonce,
		body: await response.text(),
		headers: [...response.headers].filter(([name]) => name !== 'set-cookie')
	};
	pages.delete(serial);
	pages.set(serial, kept);
	if (pages.size > MAX_PAGES) pages.delete(pages.keys().next().value!);
	return answer(kept);
};

function answer(kept: Kept): Response {
	const nonce = randomBytes(16).toString('base64');
	const headers = new Headers(
		kept.headers.map(([name, value]): [string, string] => [
			name,
			name === 'content-security-policy' ? value.replaceAll(kept.nonce, nonce) : value
		])
	);
	headers.delete('content-length');
	return new Response(kept.body.replaceAll(kept.nonce, nonce), { status: 200, headers });
}
