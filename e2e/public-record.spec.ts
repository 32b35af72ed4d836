/**
 * A label's page for anyone: rendered once and sent again from memory, each answer with a
 * fresh CSP nonce (CSP Level 3 §7.1), compressed when the browser accepts gzip, 304 on a
 * rescan that brings the validator; the page still hydrates with no CSP violation.
 */
import { expect } from '@playwright/test';
import { test } from './roles';

test.describe('the public record of a module', () => {
	test('is kept and sent again with a new nonce each time, gzip when asked, 304 on its ETag', async ({
		request,
		as
	}) => {
		const staff = await as('admin');
		const api = await (await staff.request.get('/api/modules?pageSize=1&sort=serial')).json();
		const path = `/m/${api.items[0].serial}`;
		const get = (headers: Record<string, string> = {}) =>
			request.get(path, { headers: { cookie: '', ...headers } });
		const [a, b] = [await get(), await get()];
		expect([a.status(), b.status()]).toEqual([200, 200]);
		const nonce = (csp: string) => /'nonce-([^']+)'/.exec(csp)?.[1];
		const [na, nb] = [
			nonce(a.headers()['content-security-policy']),
			nonce(b.headers()['content-security-policy'])
		];
		expect(na).toBeTruthy();
		expect(na).not.toBe(nb);
		const [ha, hb] = [await a.text(), await b.text()];
		expect(ha).toContain(`nonce="${na}"`);
		expect(hb).toContain(`nonce="${nb}"`);
		expect(hb.replaceAll(nb!, na!)).toBe(ha);
		expect(a.headers()['etag']).toBe(b.headers()['etag']);
		expect(a.headers()['cache-control']).toBe('public, no-cache');

		const zipped = await get({ 'accept-encoding': 'gzip' });
		expect(zipped.headers()['content-encoding']).toBe('gzip');
		expect(zipped.headers()['vary']).toContain('Accept-Encoding');
		expect(await zipped.text()).toContain(api.items[0].serial);

		const again = await get({ 'if-none-match': a.headers()['etag'] });
		expect(again.status()).toBe(304);
	});

	test('hydrates from the kept page with no CSP violation', async ({ browser, as }) => {
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
			// The inline boot script ran (it defines SvelteKit's global): its nonce was accepted.
			await page.waitForFunction(() =>
				Object.keys(window).some((k) => k.startsWith('__sveltekit_'))
			);
		}
		expect(violations).toEqual([]);
		await ctx.close();
	});
});
