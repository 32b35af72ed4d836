/**
 * The fleet and claims pages load their rows in a universal load from the API, so the first
 * page arrives rendered from the server (no script needed to see it) and the URL is the
 * state: opening a filtered address shows exactly that view.
 */
import { expect } from '@playwright/test';
import { test, stateFile } from './roles';

test.describe('first page rendered on the server', () => {
	test.use({ javaScriptEnabled: false, storageState: stateFile('admin') });

	test('the fleet table has its rows without any script', async ({ page }) => {
		const api = await (await page.request.get('/api/modules?pageSize=10')).json();
		expect(api.items.length).toBeGreaterThan(0);
		await page.goto('/fleet?pageSize=10');
		for (const m of api.items.slice(0, 3))
			await expect(page.getByRole('main')).toContainText(m.serial);
	});

	test('the claims queue has its rows without any script, filtered by the URL', async ({
		page
	}) => {
		const api = await (await page.request.get('/api/claims?state=filed')).json();
		await page.goto('/claims?state=filed');
		await expect(page.getByRole('status')).toContainText(
			`${api.total} ${api.total === 1 ? 'claim' : 'claims'}`
		);
		for (const c of api.items.slice(0, 3))
			await expect(page.getByRole('main')).toContainText(c.reference);
	});

	test('an unreadable fleet address says what is wrong', async ({ page }) => {
		await page.goto('/fleet?pageSize=abc');
		await expect(page.getByRole('alert')).toBeVisible();
	});
});

test('changing a claims filter changes the URL and the rows follow it', async ({ as }) => {
	const officer = await as('warranty');
	await officer.goto('/claims');
	// The filter acts once the page's script has taken over (hydrated); a choice made on the
	// server-rendered page before that changes only the select.
	await officer.waitForLoadState('networkidle');
	await officer.getByLabel('State').selectOption('filed');
	await expect(officer).toHaveURL(/state=filed/);
	const api = await (await officer.request.get('/api/claims?state=filed')).json();
	await expect(officer.getByRole('status')).toContainText(String(api.total));
});
