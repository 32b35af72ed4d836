import { expect, test } from '@playwright/test';
import { stateFile } from './roles';

// On a slow phone the form is on screen seconds before the page's script arrives. What the
// technician types in that time must survive hydration (static/keep-input.js) and be saved.
test('typing before the page’s script has arrived is kept and saved', async ({ browser }) => {
	test.setTimeout(90_000);
	const ctx = await browser.newContext({
		storageState: stateFile('ridgelineTech'),
		viewport: { width: 390, height: 844 },
		isMobile: true,
		hasTouch: true
	});
	const page = await ctx.newPage();
	let scriptsHeld = 0;
	await page.route('**/_app/immutable/**/*.js', async (route) => {
		scriptsHeld++;
		await new Promise((r) => setTimeout(r, 2500));
		await route.continue();
	});
	await page.goto('/sites/new', { waitUntil: 'commit' });
	await page.getByLabel('Site name').fill('Kestrel Point pump shed');
	await page.getByText('Workshop, farm or yard').click();
	// The page's script arrives and takes over; the typing is still there.
	await page.waitForFunction(() => document.querySelector('body')?.dataset.hydrated === 'yes');
	expect(scriptsHeld).toBeGreaterThan(0);
	await expect(page.getByLabel('Site name')).toHaveValue('Kestrel Point pump shed');
	await expect(page.getByLabel('Workshop, farm or yard')).toBeChecked();
	await page.getByLabel('Owner’s name').fill('Ysolde Marrin');
	await page.getByLabel('Phone or e-mail').fill('+61 400 555 011');
	await page.getByLabel('Address').fill('Kestrel Point road, Ridgeline hills');
	await page.getByRole('button', { name: 'Save site' }).click();
	await page.waitForURL(/\/sites\/\d+/);
	await expect(page.getByRole('heading', { level: 1 })).toContainText('Kestrel Point pump shed');
	await ctx.close();
});
