import { test, expect } from './roles';
import { formatSerial } from '../src/lib/domain/serial';

// The demo's 2023 TC-HC-48 run went to Saltmarsh Solar; its third module sits in the
// commissioned cabin bank and has a claim with capacity and throughput evidence.
const serial = formatSerial({ variant: '48', year: 2023, number: 3 });
const GTIN_48 = '09521234600022'; // the demo TC-HC-48's GTIN-14 (GS1 check digit 2)
const label = `/01/${GTIN_48}/21/${serial}`;
const phone = { viewport: { width: 390, height: 844 } };

test.describe('battery passport on a phone', () => {
	test.use(phone);

	test('scanning the label opens the public record, which links to the public passport', async ({
		page
	}) => {
		await page.goto(label);
		await expect(page).toHaveURL(new RegExp(`/m/${serial}$`));
		await expect(page.getByTestId('public-record')).toBeVisible();
		await page.screenshot({ path: 'test-results/passport-1-label-record.png', fullPage: true });
		await page.getByTestId('passport-link').click();
		await expect(page).toHaveURL(new RegExp(`/passport/${serial}$`));
		await expect(page.getByTestId('passport-tier')).toHaveText('Public');
		await expect(page.getByTestId('condition-note')).toBeVisible();
		await expect(page.getByTestId('passport-section-condition')).toHaveCount(0);
		await expect(page.getByTestId('passport-section-safety')).toContainText(
			'isolated and locked off'
		);
		await expect(page.getByTestId('passport-missing')).toContainText(
			'Carbon footprint performance class'
		);
		await page.screenshot({ path: 'test-results/passport-2-public.png', fullPage: true });
		const href = await page.getByTestId('passport-json').getAttribute('href');
		const res = await page.request.get(href!);
		expect(res.headers()['content-disposition']).toContain(`passport-${serial}-public.json`);
		const json = await res.json();
		expect(json.tier).toBe('public');
		expect(json.performance.batteryCondition).toBeUndefined();
		expect(json.generalProductInformation.warrentyPeriod).toBe('P180M');
	});

	test('the module’s dealer sees the condition; another dealer sees the public tier', async ({
		as
	}) => {
		const dealer = await as('saltmarsh');
		await dealer.setViewportSize(phone.viewport);
		await dealer.goto(`/passport/${serial}`);
		await expect(dealer.getByTestId('passport-tier')).toHaveText('Dealer and assembler');
		const condition = dealer.getByTestId('passport-section-condition');
		await expect(condition).toContainText('State of health');
		await expect(condition).toContainText('Equivalent full cycles');
		await expect(condition).toContainText('One module warmer');
		await expect(dealer.getByTestId('passport-section-history')).toBeVisible();
		await condition.scrollIntoViewIfNeeded();
		await dealer.screenshot({ path: 'test-results/passport-3-dealer-condition.png' });
		await dealer.screenshot({ path: 'test-results/passport-3-dealer-full.png', fullPage: true });

		const other = await as('ridgeline');
		await other.goto(`/passport/${serial}`);
		await expect(other.getByTestId('passport-tier')).toHaveText('Public');
		await expect(other.getByTestId('passport-section-condition')).toHaveCount(0);
	});

	test('the linkset lists the link types', async ({ page }) => {
		await page.goto(`${label}?linkType=all`);
		const body = JSON.parse((await page.locator('body').innerText()).trim());
		const ctx = body.linkset[0];
		expect(ctx.anchor).toMatch(new RegExp(`${label}$`));
		for (const t of ['defaultLink', 'pip', 'sustainabilityInfo', 'safetyInfo'])
			expect(ctx[`https://gs1.org/voc/${t}`]?.length).toBeGreaterThan(0);
		await page.screenshot({ path: 'test-results/passport-4-linkset.png', fullPage: true });
	});
});

test('resolver behaviours over HTTP (GS1-Conformant Resolver Standard; RFC 9264, RFC 8288)', async ({
	request
}) => {
	const get = (path: string, headers: Record<string, string> = {}) =>
		request.get(path, { headers, maxRedirects: 0 });

	const def = await get(label);
	expect(def.status()).toBe(307);
	expect(def.headers().location).toMatch(new RegExp(`/m/${serial}$`));
	expect(def.headers().link).toContain('rel="linkset"; type="application/linkset+json"');
	expect(def.headers()['access-control-allow-origin']).toBe('*');

	const pip = await get(`${label}?linkType=gs1:sustainabilityInfo`);
	expect(pip.status()).toBe(307);
	expect(pip.headers().location).toMatch(new RegExp(`/passport/${serial}$`));

	const ls = await get(label, { accept: 'application/linkset+json' });
	expect(ls.status()).toBe(200);
	expect(ls.headers()['content-type']).toBe('application/linkset+json');
	expect(ls.headers().link).toContain('rel="https://gs1.org/voc/pip"');

	const none = await get(`${label}?linkType=gs1:recallStatus`);
	expect(none.status()).toBe(404);
	expect(none.headers().link).toBeTruthy();

	for (const bad of [
		`/01/09521234600023/21/${serial}`, // bad check digit
		`/01/952123460002/21/${serial}`, // 12 digits: valid length but wrong check digit
		`/01/0952123460002211/21/${serial}`, // 16 digits
		`/01/${GTIN_48}` // missing serial
	]) {
		const r = await get(bad);
		expect(r.status(), bad).toBe(400);
		expect((await r.json()).message.length).toBeGreaterThan(10);
	}
	const unknown = await get(`/01/${GTIN_48}/21/PL48-26-999999X`);
	expect(unknown.status()).toBe(404);

	// TC-HC-12 has no GTIN: its labels keep /m/{serial}, and a Digital Link for it is refused.
	const serial12 = formatSerial({ variant: '12', year: 2026, number: 1 });
	const r12 = await get(`/01/${GTIN_48}/21/${serial12}`);
	expect(r12.status()).toBe(404);
	expect((await r12.json()).message).toContain(`/m/${serial12}`);

	const wk = await get('/.well-known/gs1resolver');
	expect(wk.status()).toBe(200);
	expect(await wk.json()).toMatchObject({ supportedPrimaryKeys: ['01'] });
});
