import { gzip, gzipSync, constants } from 'node:zlib';
import { promisify } from 'node:util';
import type { Handle } from '@sveltejs/kit';

const gzipAsync = promisify(gzip);

/** Smaller answers are sent as they are: the header and the work cost more than they save. */
const MIN_BYTES = 1024;
/** Up to this size gzip runs on the spot (~0.1 ms for a 6 KB page); larger bodies in the thread pool. */
const INLINE_BYTES = 64 * 1024;

/** Whether the request accepts gzip (RFC 9110 §12.5.3): listed, or `*`, with a q-value above 0. */
export function acceptsGzip(header: string | null): boolean {
	if (!header || header.length > 512) return false;
	for (const part of header.split(',')) {
		const [coding, ...params] = part.trim().toLowerCase().split(';');
		if (coding !== 'gzip' && coding !== '*') continue;
		const q = params.map((p) => p.trim()).find((p) => p.startsWith('q='));
		if (!q || Number(q.slice(2)) > 0) return true;
	}
	return false;
}

/**
 * Compresses server-rendered pages (text/html) with gzip when the browser accepts it:
 * adapter-node compresses only the static files it precompressed at build time, not SSR
 * answers. A reverse proxy can do this instead (nginx `gzip on; gzip_types text/html`); then
 * set `COMPRESS_HTML=0`. JSON answers of the API are left to the proxy: they are small pages
 * of the fleet or large exports that already stream, and compressing them here costs the one
 * event-loop thread more than it saves on a local network. Large pages (a label sheet of
 * 1,000 QR codes, ~2 MB) are compressed in libuv's thread pool at level 1.
 */
export const compressHtml: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (
		process.env.COMPRESS_HTML === '0' ||
		event.request.method === 'HEAD' ||
		response.status === 204 ||
		response.status === 304 ||
		!response.body ||
		response.headers.has('content-encoding') ||
		!(response.headers.get('content-type') ?? '').startsWith('text/html') ||
		!acceptsGzip(event.request.headers.get('accept-encoding'))
	)
		return response;
	const body = Buffer.from(await response.arrayBuffer());
	const headers = new Headers(response.headers);
	headers.append('vary', 'Accept-Encoding');
	if (body.length < MIN_BYTES)
		return new Response(body, {
			status: response.status,
			statusText: response.statusText,
			headers
		});
	const zipped =
		body.length <= INLINE_BYTES
			? gzipSync(body, { level: 6 })
			: await gzipAsync(body, { level: constants.Z_BEST_SPEED });
	headers.set('content-encoding', 'gzip');
	headers.set('content-length', String(zipped.length));
	return new Response(zipped, {
		status: response.status,
		statusText: response.statusText,
		headers
	});
};
