import { test, expect } from './roles';

test('ship modules to Saltmarsh Solar by scanning; the dealer sees exactly its units and nothing of Ridgeline', async ({
	as,
	baseURL
}) => {
	const workshop = await as('workshop');
	const stock = await (
		await workshop.request.get(
			'/api/modules?state=in_stock&model=TC-HC-48&sort=serial&dir=asc&pageSize=10'
		)
	).json();
	const serials: string[] = stock.items.slice(0, 3).map((i: { serial: string }) => i.serial);
	expect(serials).toHaveLength(3);

	await workshop.goto('/shipments');
	await workshop.getByLabel('Dealer').selectOption({ label: 'Saltmarsh Solar — Saltmarsh coast' });
	await workshop.getByRole('button', { name: 'Start shipment' }).click();
	await expect(workshop.getByRole('heading', { name: /SH-\d{4}-\d{4}/ })).toBeVisible();
	const scan = workshop.getByLabel(/Scan a module label/);
	for (const s of serials) {
		await scan.fill(`${baseURL}/m/${s}`);
		await scan.press('Enter');
		await expect(workshop.getByRole('status').filter({ hasText: s })).toBeVisible();
	}
	// A module that failed its factory test is refused with the reason.
	const failed = await (
		await workshop.request.get('/api/modules?state=test_failed&pageSize=10')
	).json();
	await scan.fill(failed.items[0].serial);
	await scan.press('Enter');
	await expect(
		workshop.getByRole('alert').filter({ hasText: 'failed its factory test' })
	).toBeVisible();

	await workshop.getByLabel(/are packed and leave now/).check();
	await workshop.getByRole('button', { name: /^Dispatch SH-/ }).click();
	await expect(workshop.getByRole('status').filter({ hasText: /dispatched/i })).toBeVisible();

	const admin = await as('admin');
	const { items: mails } = await (
		await admin.request.get('/api/outbox?to=dealer@saltmarsh.example')
	).json();
	const notice = mails.find((m: { subject: string }) => /^Shipment SH-/.test(m.subject));
	for (const s of serials) expect(notice.text).toContain(s);

	// The dealer's list, export and record show its units; a Ridgeline unit does not exist for it.
	const dealer = await as('saltmarsh');
	const mine = await (await dealer.request.get('/api/modules?pageSize=200')).json();
	expect(mine.items.every((i: { dealer: string }) => i.dealer === 'Saltmarsh Solar')).toBe(true);
	for (const s of serials) expect(mine.items.map((i: { serial: string }) => i.serial)).toContain(s);
	const ridgeline = await (await admin.request.get('/api/modules?dealer=3&pageSize=10')).json();
	const theirs = ridgeline.items[0].serial;
	expect((await dealer.request.get(`/api/modules/${theirs}`)).status()).toBe(404);
	const probe = await (await dealer.request.get(`/api/modules?q=${theirs}`)).json();
	expect(probe.total).toBe(0);
	const csv = await (await dealer.request.get('/api/modules/export.csv')).text();
	expect(csv).toContain(serials[0]);
	expect(csv).not.toContain(theirs);
	await dealer.goto(`/m/${theirs}`);
	await expect(dealer.getByTestId('public-record')).toBeVisible();
	await expect(dealer.getByTestId('full-record')).toHaveCount(0);

	await dealer.goto('/fleet');
	await expect(dealer.getByRole('main')).toContainText(serials[0]);
	await dealer.screenshot({ path: 'test-results/fleet-dealer.png', fullPage: true });
});

test('trace a cell lot to its dealers and send them a service notice', async ({ as }) => {
	const admin = await as('admin');
	await admin.goto('/trace?lot=HCL-2640-A');
	const byDealer = admin.getByTestId('trace-by-dealer');
	await expect(byDealer).toContainText('Saltmarsh Solar');
	await expect(byDealer).toContainText('Ridgeline Off-Grid Supply');
	await admin.getByLabel('Subject').fill('Re-torque terminal bolts at next visit');
	await admin
		.getByLabel('Text for the dealers')
		.fill(
			'Please re-torque the terminal bolts of the listed modules to the specified torque at your next visit.'
		);
	await admin.getByRole('button', { name: 'Send notice' }).click();
	await expect(admin.getByRole('status')).toContainText(/Notice sent to 2 dealers/);
	const { items } = await (
		await admin.request.get('/api/outbox?to=dealer@ridgeline.example')
	).json();
	expect(
		items.some((m: { subject: string }) => m.subject.includes('Re-torque terminal bolts'))
	).toBe(true);
	await admin.goto('/dashboard');
	await expect(admin.getByTestId('by-state')).toContainText('In stock');
});
