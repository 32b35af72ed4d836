import { describe, expect, it } from 'vitest';
import { gunzipSync, strFromU8 } from 'fflate';
import { acceptsGzip, compressHtml } from '$lib/server/compression';

type HandleInput = Parameters<typeof compressHtml>[0];
const run = (body: string, type: string, acceptEncoding: string | null, method = 'GET') =>
	compressHtml({
		event: {
			request: new Request('http://x.test/m/PL48-26-000001A', {
				method,
				headers: acceptEncoding ? { 'accept-encoding': acceptEncoding } : {}
			})
		} as HandleInput['event'],
		resolve: async () => new Response(body, { headers: { 'content-type': type, etag: 'W/"a"' } })
	});

describe('compressing server-rendered pages', () => {
	it('reads Accept-Encoding as RFC 9110 §12.5.3 has it: codings, *, q-values, q=0 refuses', () => {
		expect(acceptsGzip('gzip, deflate, br')).toBe(true); // what browsers send
		expect(acceptsGzip('GZIP')).toBe(true); // codings are case-insensitive
		expect(acceptsGzip('deflate;q=1, gzip;q=0.001')).toBe(true);
		expect(acceptsGzip('*;q=0.5')).toBe(true);
		expect(acceptsGzip('gzip;q=0')).toBe(false);
		expect(acceptsGzip('br, gzip;q=0.0')).toBe(false);
		expect(acceptsGzip('identity')).toBe(false);
		expect(acceptsGzip('')).toBe(false);
		expect(acceptsGzip(null)).toBe(false);
		expect(acceptsGzip('gzip,'.repeat(200))).toBe(false); // no work on an oversized header
	});

	it('gzips a page a browser accepts gzip for; an independent inflater (fflate) gives it back', async () => {
		const page = `<!doctype html><html><body>${'<p>Module record</p>'.repeat(400)}</body></html>`;
		const res = await run(page, 'text/html', 'gzip, deflate, br');
		expect(res.headers.get('content-encoding')).toBe('gzip');
		expect(res.headers.get('vary')).toContain('Accept-Encoding');
		expect(res.headers.get('etag')).toBe('W/"a"');
		const bytes = new Uint8Array(await res.arrayBuffer());
		expect(Number(res.headers.get('content-length'))).toBe(bytes.length);
		expect(bytes.length).toBeLessThan(page.length / 10);
		expect(strFromU8(gunzipSync(bytes))).toBe(page);
		// A large page (a label sheet) goes through the thread pool, same result.
		const sheet = page.repeat(40);
		const big = await run(sheet, 'text/html', 'gzip');
		expect(strFromU8(gunzipSync(new Uint8Array(await big.arrayBuffer())))).toBe(sheet);
	});

	it('leaves alone what is not a page, small, refused or a HEAD', async () => {
		const page = 'x'.repeat(5000);
		for (const res of [
			await run(page, 'application/json', 'gzip'),
			await run(page, 'text/html', 'identity'),
			await run(page, 'text/html', null),
			await run('<p>tiny</p>', 'text/html', 'gzip')
		]) {
			expect(res.headers.get('content-encoding')).toBeNull();
			expect((await res.text()).length).toBeGreaterThan(0);
		}
		expect((await run(page, 'text/html', 'gzip', 'HEAD')).headers.get('content-encoding')).toBe(
			null
		);
	});
});
