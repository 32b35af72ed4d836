import { test, expect, signIn } from './roles';

// A fresh person, so no other spec's saved session is touched.
const EMAIL = 'marlo.fen@ridgeline.example';
const PASSWORD = 'ridge-and-fen-2026';

test('the admin changes a role, switches a dealer off (their session ends), reads and exports the audit trail', async ({
	as,
	browser,
	baseURL
}) => {
	const admin = await as('admin');
	await admin.goto('/admin/users');
	const invite = admin.getByRole('form', { name: 'Invite someone' });
	// The invite form has no default role.
	await expect(invite.getByLabel('Role')).toHaveValue('');
	await invite.getByLabel('Name').fill('Marlo Fen');
	await invite.getByLabel('E-mail').fill(EMAIL);
	await invite.getByLabel('Role').selectOption({ label: 'Field technician' });
	await invite
		.getByLabel('Organisation')
		.selectOption({ label: 'Ridgeline Off-Grid Supply (dealer)' });
	await invite.getByRole('button', { name: 'Send invitation' }).click();
	await expect(
		admin.getByRole('status').filter({ hasText: `Invitation sent to ${EMAIL}` })
	).toBeVisible();

	// The new person sets a password through the mailed link and signs in.
	const mail = await (await admin.request.get(`/api/outbox?to=${EMAIL}`)).json();
	const link = /\/welcome\/[A-Za-z0-9_-]+/.exec(mail.items[0].text)![0];
	const ctx = await browser.newContext({ baseURL });
	const marlo = await ctx.newPage();
	await marlo.goto(link);
	await marlo.getByLabel(/New password/).fill(PASSWORD);
	await marlo.getByLabel('The same again').fill(PASSWORD);
	await marlo.getByRole('button', { name: 'Save password and sign in' }).click();
	await expect(marlo.getByText('Password saved')).toBeVisible();
	await signIn(marlo, EMAIL, PASSWORD);
	expect((await marlo.request.get('/api/modules?pageSize=1')).status()).toBe(200);

	// A role that does not fit the organisation is refused in words.
	const people = await (await admin.request.get(`/api/users`)).json();
	const person = people.items.find((p: { email: string }) => p.email === EMAIL);
	expect(person).toMatchObject({ role: 'field_tech', active: true });
	const refused = await admin.request.patch(`/api/users/${person.id}`, {
		data: { role: 'warranty' }
	});
	expect(refused.status()).toBe(400);
	expect((await refused.json()).message).toContain(
		'A Warranty officer belongs to the assembler, not to a dealer.'
	);

	// Change the role on the page: their open session ends at once.
	await admin.goto(`/admin/users?q=${encodeURIComponent('Marlo')}`);
	await admin.getByText('Change').click();
	const form = admin.getByRole('form', { name: 'Change Marlo Fen' });
	await form.getByLabel('Role').selectOption({ label: 'Dealer' });
	await form.getByRole('button', { name: 'Save' }).click();
	await expect(admin.getByRole('status').filter({ hasText: 'role changed' })).toBeVisible();
	expect((await marlo.request.get('/api/modules?pageSize=1')).status()).toBe(401);

	// Signed in again as a dealer, then switched off: the session ends and sign-in is refused.
	await signIn(marlo, EMAIL, PASSWORD);
	expect((await marlo.request.get('/api/modules?pageSize=1')).status()).toBe(200);
	const off = await admin.request.patch(`/api/users/${person.id}`, { data: { active: false } });
	expect(off.status()).toBe(200);
	expect((await off.json()).active).toBe(false);
	expect((await marlo.request.get('/api/modules?pageSize=1')).status()).toBe(401);
	await marlo.goto('/signin');
	await marlo.getByLabel('E-mail').fill(EMAIL);
	await marlo.getByLabel('Password').fill(PASSWORD);
	await marlo.getByRole('button', { name: 'Sign in' }).click();
	await expect(marlo.getByRole('alert')).toBeVisible();
	await expect(marlo.getByTestId('home')).toHaveCount(0);
	await ctx.close();

	// The audit trail, filtered to that person, shows both changes field by field.
	await admin.goto('/admin/audit');
	await admin.getByLabel('Record type').selectOption({ label: 'Person' });
	await admin.getByLabel('Record id').fill(String(person.id));
	await admin.getByRole('button', { name: 'Filter' }).click();
	const entries = admin.getByTestId('audit-entries');
	await expect(entries.getByText('user.deactivate')).toBeVisible();
	await expect(entries.getByText('user.update')).toBeVisible();
	await expect(entries.locator('tr', { hasText: 'role' }).first()).toContainText('field_tech');
	const download = admin.waitForEvent('download');
	await admin.getByTestId('audit-export').click();
	const csv = await (await download).createReadStream();
	let text = '';
	for await (const chunk of csv) text += chunk;
	expect(text).toContain('user.deactivate');
	expect(text).toContain('active: yes → no');
	// Only admins read the trail.
	const dealer = await as('saltmarsh');
	expect((await dealer.request.get('/api/audit')).status()).toBe(403);
	expect((await dealer.request.get('/api/users')).status()).toBe(403);
});

test('a new workshop user imports the README example file: 3 of 3 rows accepted, stored', async ({
	as
}) => {
	const page = await as('workshop');
	await page.goto('/imports');
	await page.getByLabel('Rig CSV file').setInputFiles('docs/factory-tests-example.csv');
	await expect(page.getByRole('button', { name: 'Store 3 accepted results' })).toBeVisible();
	await page.getByRole('button', { name: 'Store 3 accepted results' }).click();
	await expect(
		page.getByRole('status').filter({ hasText: 'Stored: 2 passed, 1 failed' })
	).toBeVisible();
});
