import { test, expect, refreshState, ROLES, signIn } from './roles';

const navOf = (page: import('@playwright/test').Page) =>
	page.getByRole('navigation', { name: 'Main' });

test('each role sees its own areas', async ({ as }) => {
	const expected: Record<string, { has: string[]; lacks: string[] }> = {
		admin: { has: ['People', 'Outbox', 'Models', 'Audit trail'], lacks: [] },
		workshop: { has: ['Build bench', 'Serials & labels'], lacks: ['People', 'Outbox'] },
		saltmarsh: { has: ['Module lookup'], lacks: ['People', 'Build bench', 'Serials & labels'] },
		warranty: { has: ['Module lookup'], lacks: ['People', 'Build bench'] }
	};
	for (const [role, { has, lacks }] of Object.entries(expected)) {
		const page = await as(role as keyof typeof ROLES);
		await page.goto('/');
		await expect(page.getByTestId('home')).toBeVisible();
		// Areas sit in groups by job: open each group's menu and the area is there.
		for (const label of has) {
			const link = navOf(page).getByRole('link', { name: label, exact: true });
			if (!(await link.isVisible())) {
				// A hidden link has no role, so the group is found by the link's text.
				const group = navOf(page)
					.locator('li[data-nav-group]')
					.filter({ has: page.locator(`a:text-is("${label}")`) });
				await group.getByRole('button').click();
			}
			await expect(link).toBeVisible();
		}
		for (const label of lacks)
			await expect(navOf(page).getByRole('link', { name: label, exact: true })).toHaveCount(0);
	}
});

test('a dealer is refused an admin page with a clear 403', async ({ as }) => {
	const page = await as('saltmarsh');
	const res = await page.goto('/admin/users');
	expect(res?.status()).toBe(403);
	await expect(page.getByTestId('error-page')).toContainText('This area is for: Administrator');
});

test('signed-out visitors are sent to sign-in and come back after', async ({ page }) => {
	await page.goto('/admin/outbox');
	await expect(page).toHaveURL(/\/signin\?next=%2Fadmin%2Foutbox/);
	await page.getByLabel('E-mail').fill(ROLES.admin);
	await page.getByLabel('Password').fill('packledger-demo');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/admin\/outbox$/);
});

test('a wrong password is refused with a message, not an error page', async ({ page }) => {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(ROLES.warranty);
	await page.getByLabel('Password').fill('not-the-password');
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page.getByRole('alert')).toContainText('do not match');
});

test('sign-out ends the session', async ({ page, browser }) => {
	await signIn(page, ROLES.workshop);
	await page.getByRole('button', { name: 'Sign out' }).first().click();
	await expect(page).toHaveURL(/\/signin/);
	await page.goto('/');
	await expect(page).toHaveURL(/\/signin/);
	// Sign-out ended every workshop session, the stored one of the other tests included.
	await refreshState(browser, 'workshop');
});

test('an invitation arrives in the outbox and its link sets a password, once', async ({
	as,
	page
}) => {
	const admin = await as('admin');
	const email = `new.tech.${Date.now()}@saltmarsh.example`;
	await admin.goto('/admin/users');
	const invite = admin.getByRole('form', { name: 'Invite someone' });
	await invite.getByLabel('Name').fill('Wren Tamsin');
	await invite.getByLabel('E-mail').fill(email);
	await invite.getByLabel('Role').selectOption('field_tech');
	await invite.getByLabel('Organisation').selectOption({ label: 'Saltmarsh Solar (dealer)' });
	await invite.getByRole('button', { name: 'Send invitation' }).click();
	await expect(admin.getByRole('status')).toContainText(`Invitation sent to ${email}`);

	const res = await admin.request.get(`/api/outbox?to=${encodeURIComponent(email)}`);
	const { items } = await res.json();
	expect(items).toHaveLength(1);
	const link = /https?:\/\/\S+\/welcome\/\S+/.exec(items[0].text)![0];

	await page.goto(link);
	await page.getByLabel('New password').fill('salt-and-tide-42');
	await page.getByLabel('The same again').fill('salt-and-tide-42');
	await page.getByRole('button', { name: 'Save password and sign in' }).click();
	await expect(page.getByRole('status')).toContainText('Password saved');
	await signIn(page, email, 'salt-and-tide-42');

	const again = await page.goto(link);
	expect(again?.status()).toBe(410);
});
