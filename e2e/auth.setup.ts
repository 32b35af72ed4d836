import { test } from '@playwright/test';
import { ROLES, signIn, stateFile, type DemoRole } from './roles';

for (const role of Object.keys(ROLES) as DemoRole[]) {
	test(`sign in as ${role} through the form`, async ({ page }) => {
		await signIn(page, ROLES[role]);
		await page.context().storageState({ path: stateFile(role) });
	});
}
