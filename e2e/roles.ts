import { test as base, expect, type Browser, type Page } from '@playwright/test';

export const DEMO_PASSWORD = 'packledger-demo';
export const ROLES = {
	admin: 'admin@tidewater.example',
	workshop: 'workshop@tidewater.example',
	tech: 'tech@tidewater.example',
	warranty: 'warranty@tidewater.example',
	saltmarsh: 'dealer@saltmarsh.example',
	ridgeline: 'dealer@ridgeline.example',
	ridgelineTech: 'tech@ridgeline.example'
} as const;
export type DemoRole = keyof typeof ROLES;

export const stateFile = (role: DemoRole) => `e2e/.auth/${role}.json`;

export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByTestId('home')).toBeVisible();
}

/**
 * Signs a role in afresh and saves its storage state again: a test that ends a role's
 * sessions (sign-out ends every session of that person) calls this so later tests still
 * find a valid stored session.
 */
export async function refreshState(browser: Browser, role: DemoRole) {
	const ctx = await browser.newContext();
	const page = await ctx.newPage();
	await signIn(page, ROLES[role]);
	await ctx.storageState({ path: stateFile(role) });
	await ctx.close();
}

/** A page already signed in as a demo role (storage state saved once by auth.setup.ts). */
export const test = base.extend<{ as: (role: DemoRole) => Promise<Page> }>({
	as: async ({ browser }, use) => {
		const contexts: Awaited<ReturnType<typeof browser.newContext>>[] = [];
		await use(async (role) => {
			const ctx = await browser.newContext({ storageState: stateFile(role) });
			contexts.push(ctx);
			return ctx.newPage();
		});
		for (const c of contexts) await c.close();
	}
});
export { expect };
