/**
 * A label's page for anyone: rendered once and sent again from memory. Its one inline script
 * is allowed by its SHA-256 hash (CSP Level 3 §8.3) instead of a nonce, which a repeated
 * answer must not reuse (§7.1); compressed when the browser accepts gzip, 304 on a rescan
 * that brings the validator; Chromium itself checks the hash when the page hydrates.
 */
import { createHash } from 'node:crypto';
import { expect } from '@playwright/test';
import { test } from './roles';

test.describe('the public record of a module', () => {
	test('is kept and sent again byte for byte, its script allowed by hash, gzip when asked, 304 on its ETag', async ({
		request,
		as
	}) => {
		const staff = await as('admin');
		const api = await (await staff.request.get('/api/modules?pageSize=1&sort=serial')).json();
		const path = `/m/${api.items[0].serial}`;
		const get = (headers: Record<string, string> = {}) =>
			request.get(path, { headers: { cookie: '', 'accept-encoding': 'identity', ...headers } });
		const [a, b] = [await get(), await get()];
		expect([a.status(), b.status()]).toEqual([200, 200]);
		const csp = a.headers()['content-security-policy'];
		expect(csp).not.toContain("'nonce-");
		expect(b.headers()['content-security-policy']).toBe(csp);
		const [ha, hb] = [await a.text(), await b.text()];
		expect(hb).toBe(ha);
		expect(ha).not.toContain('nonce=');
		// The policy's hash is that of the page's one inline script, computed here on its own.
		const inline = [...ha.matchAll(/<script>([\s\S]*?)<\/script>/g)].map((m) => m[1]);
		expect(inline).toHaveLength(1);
		const hash = createHash('sha256').update(inline[0], 'utf8').digest('base64');
		expect(csp).toContain(`script-src 'self' 'sha256-${hash}'`);
		expect(a.headers()['etag']).toBe(b.headers()['etag']);
		expect(a.headers()['cache-control']).toBe('public, no-cache');

		const zipped = await get({ 'accept-encoding': 'gzip' });
		expect(zipped.headers()['content-encoding']).toBe('gzip');
		expect(zipped.headers()['vary']).toContain('Accept-Encoding');
		expect(await zipped.text()).toContain(api.items[0].serial);

		const again = await get({ 'if-none-match': a.headers()['etag'] });
		expect(again.status()).toBe(304);
	});

	test('hydrates from the kept page with no CSP violation (the hash checked by Chromium)', async ({
		browser,
		as
	}) => {
		const staff = await as('admin');
		const api = await (await staff.request.get('/api/modules?pageSize=1&sort=serial')).json();
		const ctx = await browser.newContext();
		const page = await ctx.newPage();
		const violations: string[] = [];
		page.on('console', (m) => {
			if (/Content Security Policy|Refused to/i.test(m.text())) violations.push(m.text());
		});
		for (let i = 0; i < 2; i++) {
			await page.goto(`/m/${api.items[0].serial}`);
			await expect(page.getByRole('main')).toContainText(api.items[0].serial);
			// The inline boot script ran (it defines SvelteKit's global): Chromium accepted its hash.
			await page.waitForFunction(() =>
				Object.keys(window).some((k) => k.startsWith('__sveltekit_'))
			);
		}
		expect(violations).toEqual([]);
		await ctx.close();
	});
});
