import { createHash } from 'node:crypto';
import { gzipSync } from 'node:zlib';
import type { Handle } from '@sveltejs/kit';
import { version } from '$app/environment';
import { getDb } from '$lib/server/db';
import { getPublicRecord, publicRecordEtag } from '$lib/server/services/modules';
import { businessDay } from '$lib/server/services/calendar';
import { acceptsGzip } from '$lib/server/compression';

/**
 * What a label's QR code opens, for anyone not signed in: `/m/<serial>`. The page is the
 * same for everyone until the record changes, so it is rendered once per validator (the
 * ETag: a hash of the record and the build, the record itself kept per data version) and
 * sent again from memory, gzipped once when it is kept. A rescan that brings the validator
 * gets 304 without a body.
 *
 * The page's one inline script carried the CSP nonce SvelteKit made when it rendered. A nonce
 * must be unique to each response (W3C CSP Level 3 §7.1), so a kept page cannot repeat it;
 * instead the kept page allows its inline script by the script's SHA-256 hash (CSP Level 3
 * §8.3, hash-source) and carries no nonce at all. Only that exact script runs, the bytes are
 * the same for everyone, and so the compressed copy can be sent as it is. A page with more
 * than one inline script, or none, is not kept.
 */
type Kept = {
	etag: string;
	body: string;
	gzipped: Uint8Array<ArrayBuffer>;
	headers: [string, string][];
};
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
			headers: { etag, 'cache-control': 'public, no-cache', vary: 'Cookie, Accept-Encoding' }
		});
	const hit = pages.get(serial);
	if (hit && hit.etag === etag) return answer(hit, event.request.headers.get('accept-encoding'));
	const response = await resolve(event);
	// Only the page as everyone sees it is kept: 200, the validator just computed.
	if (response.status !== 200 || response.headers.get('etag') !== etag) return response;
	const html = await response.text();
	const kept = keep(etag, html, [...response.headers]);
	if (!kept) return new Response(html, { status: response.status, headers: response.headers });
	pages.delete(serial);
	pages.set(serial, kept);
	if (pages.size > MAX_PAGES) pages.delete(pages.keys().next().value!);
	return answer(kept, event.request.headers.get('accept-encoding'));
};

const OPEN = '<script nonce="';

/**
 * The page made fit to keep: its inline script's nonce attribute taken out and the CSP's
 * `'nonce-…'` source replaced by that script's `'sha256-…'` (base64 of the digest of the
 * script's text exactly as sent, CSP Level 3 §8.4.2). Null when the page does not have
 * exactly one nonce-bearing inline script named in the policy.
 */
export function keep(etag: string, html: string, headers: [string, string][]): Kept | null {
	const start = html.indexOf(OPEN);
	if (start < 0 || html.indexOf(OPEN, start + 1) >= 0) return null;
	const quote = html.indexOf('"', start + OPEN.length);
	const nonce = html.slice(start + OPEN.length, quote);
	if (quote < 0 || nonce.length < 16 || nonce.length > 64 || html[quote + 1] !== '>') return null;
	const textStart = quote + 2;
	const textEnd = html.indexOf('</script>', textStart);
	if (textEnd < 0) return null;
	const csp = headers.find(([name]) => name === 'content-security-policy')?.[1] ?? '';
	if (!csp.includes(`'nonce-${nonce}'`)) return null;
	const hash = createHash('sha256').update(html.slice(textStart, textEnd), 'utf8').digest('base64');
	const body = `${html.slice(0, start)}<script>${html.slice(textStart)}`;
	const kept: [string, string][] = [];
	for (const [name, value] of headers) {
		if (name === 'set-cookie' || name === 'content-length' || name === 'vary') continue;
		kept.push([
			name,
			name === 'content-security-policy'
				? value.replace(`'nonce-${nonce}'`, `'sha256-${hash}'`)
				: value
		]);
	}
	kept.push(['vary', 'Cookie, Accept-Encoding']);
	const zipped = gzipSync(body, { level: 9 });
	// A copy of its own (Node's small buffers share a pool), so the kept bytes are exactly these.
	return { etag, body, gzipped: new Uint8Array(zipped), headers: kept };
}

function answer(kept: Kept, acceptEncoding: string | null): Response {
	const headers = new Headers(kept.headers);
	if (process.env.COMPRESS_HTML !== '0' && acceptsGzip(acceptEncoding)) {
		headers.set('content-encoding', 'gzip');
		headers.set('content-length', String(kept.gzipped.length));
		return new Response(kept.gzipped, { status: 200, headers });
	}
	return new Response(kept.body, { status: 200, headers });
}
