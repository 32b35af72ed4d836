import { test, expect } from './roles';

test('allocate 24 serials, print the A4 sheet, scan one label at the bench and register its build', async ({
	as,
	browser
}) => {
	const page = await as('workshop');
	await page.goto('/allocations');
	await page.getByLabel('Model').selectOption({ label: 'TC-HC-48 — TC-HC 48 V module' });
	await page.getByLabel('How many').fill('24');
	await page.getByRole('button', { name: 'Reserve serials' }).click();
	await expect(page.getByRole('heading', { name: /Run #\d+: 24 × TC-HC-48/ })).toBeVisible();

	await page.getByRole('link', { name: /A4 sheet/ }).click();
	const labels = page.getByTestId('label-sheet').locator('.module-label');
	await expect(labels).toHaveCount(24);
	await page.screenshot({ path: 'test-results/labels-a4.png', fullPage: true });
	await page.getByRole('button', { name: 'Print 24 labels' }).evaluate((b) => {
		window.print = () => document.body.setAttribute('data-printed', 'yes');
		(b as HTMLButtonElement).click();
	});
	await expect(page.getByRole('status')).toContainText('Print recorded');

	const serial = (await labels.nth(3).getAttribute('data-serial'))!;
	const payload = (await labels.nth(3).getAttribute('data-payload'))!;
	expect(payload).toMatch(new RegExp(`/01/\\d{14}/21/${serial}$`));

	// A handheld scanner types the QR's URL and Enter into the focused box.
	await page.goto('/bench');
	await expect(page.getByLabel(/Scan a module label/)).toBeFocused();
	await page.keyboard.type(payload);
	await page.keyboard.press('Enter');
	await expect(page.getByRole('heading', { name: serial })).toBeVisible();
	await page.getByLabel(/Scan or type a lot code/).fill('HCL-2611-A');
	await page.getByLabel(/Scan or type a lot code/).press('Enter');
	await page.getByLabel(/All assembly checks done/).focus();
	await page.keyboard.press('Space');
	await page.keyboard.press('Enter');
	await expect(page.getByRole('status')).toContainText(`${serial} registered as built`);
	await expect(page.getByLabel(/Scan a module label/)).toBeFocused();
	// The latest builds say when, and the shift's count includes this one.
	await expect(page.getByTestId('shift-count')).toContainText(
		/[1-9]\d* modules? built in this shift/
	);
	await expect(page.locator('aside li').filter({ hasText: serial })).toContainText(/\d{1,2}:\d{2}/);
	await page.screenshot({ path: 'test-results/bench-after-build.png', fullPage: true });

	// The same label again is refused with a reason, and a foreign code too.
	await page.keyboard.type(serial);
	await page.keyboard.press('Enter');
	await expect(page.getByRole('alert')).toContainText('already built');
	await page.getByLabel(/Scan a module label/).fill('https://shop.example/p/123');
	await page.getByLabel(/Scan a module label/).press('Enter');
	await expect(page.getByRole('alert')).toContainText('not a Packledger label');

	// Signed in: the full record; signed out: the public one, reached through the QR's URL.
	await page.goto(`/m/${serial}`);
	await expect(page.getByTestId('module-state')).toHaveText('Built, awaiting test');
	await expect(page.getByTestId('timeline')).toContainText('Built with cell lot HCL-2611-A');
	await expect(page.getByTestId('timeline')).toContainText('Label printed');

	const anon = await browser.newPage();
	await anon.goto(new URL(payload).pathname);
	await expect(anon).toHaveURL(new RegExp(`/m/${serial}$`));
	await expect(anon.getByTestId('public-record')).toContainText('46.5 Ah');
	await expect(anon.getByTestId('full-record')).toHaveCount(0);
	await anon.screenshot({ path: 'test-results/public-record.png', fullPage: true });
	const pub = await (await anon.request.get(`/api/public/modules/${serial}`)).json();
	expect(pub).toMatchObject({
		identifier: serial,
		model: { code: 'TC-HC-48', ratedCapacityAh: 46.5 },
		status: 'original'
	});
	expect(JSON.stringify(pub)).not.toMatch(/owner|address|site/i);
	await anon.close();
});

test('an unknown serial answers 404 with a way to search', async ({ page }) => {
	const res = await page.goto('/m/PL48-26-999999Z');
	expect(res?.status()).toBe(404);
	await expect(page.getByTestId('error-page')).toContainText(/not a module serial|No module/);
	await expect(page.getByRole('link', { name: 'Search for a module' })).toBeVisible();
});

test('the module API hides other dealers’ modules and validates builds', async ({ as }) => {
	const page = await as('workshop');
	const bad = await page.request.post('/api/modules/PL48-26-000001X/build', {
		data: { cellLots: [], checks: [] }
	});
	expect(bad.status()).toBe(400);
	const body = await bad.json();
	expect(body.issues.map((i: { path: string }) => i.path)).toEqual(
		expect.arrayContaining(['cellLots', 'checks'])
	);
	const dealer = await as('ridgeline');
	const hidden = await dealer.request.get('/api/modules/PL48-26-000001' + 'X');
	expect(hidden.status()).toBe(404);
});
