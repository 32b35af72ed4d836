import { test, expect } from './roles';

const LOG = [
	'Time,Battery discharge total (kWh),Battery temperature (°C)',
	'2023-06-13T00:00:00Z,0,24.5',
	'2024-06-13T00:00:00Z,10450,26.0',
	'2025-06-13T00:00:00Z,21380,27.5',
	'2026-11-20T00:00:00Z,36800,26.0'
].join('\r\n');

test('a dealer files a claim with an inverter log, the officer asks for evidence, decides, and a replacement is scanned in', async ({
	as
}) => {
	const dealer = await as('saltmarsh');
	const mine = await (
		await dealer.request.get(
			// The 2023 cabin bank's modules (the demo's older cohort is Saltmarsh's too).
			'/api/modules?state=commissioned&model=TC-HC-48&builtFrom=2023-01-01&builtTo=2023-12-31&sort=serial&dir=asc&pageSize=10'
		)
	).json();
	const serial: string = mine.items[0].serial;

	await dealer.goto('/claims/new');
	await expect(dealer.getByRole('main')).toContainText(/isolate/i);
	await dealer.getByLabel(/Serials/).fill(serial);
	await dealer.locator('select[name="fault"]').selectOption('capacity_fade');
	await dealer.getByLabel(/Inverter log/).setInputFiles({
		name: 'cabin-inverter-log.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from(LOG)
	});
	await dealer.getByRole('button', { name: 'Read the log' }).click();
	await dealer.getByRole('button', { name: 'Read the log with these columns' }).click();
	await expect(dealer.locator('input[name="throughputWh"]')).toHaveValue(/^36800000/);
	await dealer.locator('input[name="measuredCapacityAh"]').fill('34,0');
	await dealer.locator('input[name="measuredAtC"]').fill('22');
	await dealer
		.locator('textarea[name="description"]')
		.fill('The cabin bank no longer lasts the night; this module tested at 34.0 Ah.');
	await dealer.getByRole('button', { name: 'File the claim' }).click();
	await expect(dealer).toHaveURL(/\/claims\/\d+\?filed/);
	const claimUrl = new URL(dealer.url()).pathname;
	const reference = (await dealer.getByRole('heading', { level: 1 }).textContent())!.match(
		/CL-\d{4}-\d{4}/
	)![0];

	const officer = await as('warranty');
	await officer.goto(claimUrl);
	await expect(officer.getByRole('main')).toContainText(/equivalent full cycles/);
	await officer.screenshot({ path: 'test-results/claim-officer.png', fullPage: true });
	await officer.getByLabel('Move to').selectOption({ label: 'Under review' });
	await officer.getByRole('button', { name: 'Move' }).click();
	await expect(officer.getByLabel('Move to')).toBeVisible();
	const ask = officer.getByTestId('ask-for-evidence');
	await ask
		.getByLabel(/What the dealer should send/)
		.fill('Please send the average cell temperature reading from the BMS.');
	await ask.getByRole('button', { name: 'Ask for evidence' }).click();
	await expect(officer.getByRole('main')).toContainText('Waiting for evidence');

	// The dealer reads the request first, with the cautions for testing, and one action.
	await dealer.goto(claimUrl);
	const request = dealer.getByTestId('evidence-request');
	await expect(request).toContainText('average cell temperature reading from the BMS');
	await expect(request.getByTestId('safety-cautions')).toContainText(/isolate/i);
	const firstSection = dealer.locator('main section').first();
	await expect(firstSection).toHaveAttribute('data-testid', 'evidence-request');
	await request.getByRole('link', { name: 'Add evidence' }).click();
	await expect(dealer).toHaveURL(/#add-evidence$/);
	const add = dealer.getByRole('region', { name: 'Add evidence' });
	await add.locator('input[name="avgCellTempC"]').fill('26');
	await add.getByLabel(/Note for the warranty officer/).fill('BMS average added.');
	await add.getByRole('button', { name: 'Add the evidence' }).click();
	await expect(dealer.getByRole('main')).toContainText('Under review');

	await officer.goto(claimUrl);
	await officer.getByText('Covered', { exact: true }).first().click();
	const reason = officer.locator('textarea[name="reason"]');
	await reason.fill(
		'Capacity test and inverter log agree; retention is below the promise at this cycle count.'
	);
	await officer.getByRole('button', { name: 'Record the decision' }).click();
	await expect(officer.getByRole('main')).toContainText(/Covered/);

	const stock = await (
		await officer.request.get(
			'/api/modules?state=in_stock&model=TC-HC-48&sort=serial&dir=desc&pageSize=10'
		)
	).json();
	const replacement: string = stock.items[0].serial;
	await officer.getByLabel(/Replacement \(scan or type\)/).fill(replacement);
	await officer.getByRole('button', { name: 'Record the replacement' }).click();
	await expect(officer.getByRole('main')).toContainText('Replacement sent');

	const admin = await as('admin');
	const { items } = await (
		await admin.request.get('/api/outbox?to=dealer@saltmarsh.example')
	).json();
	const about = items.filter((m: { subject: string }) => m.subject.includes(reference));
	expect(about.length).toBeGreaterThanOrEqual(5);
	const failed = await (await officer.request.get(`/api/modules/${serial}`)).json();
	expect(failed.state).toBe('returned');
	const fresh = await (await officer.request.get(`/api/modules/${replacement}`)).json();
	expect(fresh.state).toBe('commissioned');
	expect(fresh.warranty.endsOn).toBe('2038-06-12');

	// The failed module comes back: the workshop scans it in, it is inspected and scrapped.
	const raNumber = (await officer.getByTestId('return-steps').textContent())!.match(
		/RA-\d{4}-\d{4}/
	)![0];
	const workshop = await as('workshop');
	await workshop.goto('/returns');
	await expect(workshop.getByTestId('safety-cautions').first()).toContainText(
		/vent flammable gas or ignite/
	);
	// A keyboard-wedge scanner types the serial into the focused box and presses Enter.
	await expect(workshop.getByLabel(/Scan the returned module/)).toBeFocused();
	await workshop.keyboard.type(serial);
	await workshop.keyboard.press('Enter');
	await expect(workshop.getByRole('main')).toContainText(raNumber);
	await workshop.getByLabel('Case or terminals damaged').check();
	await workshop.getByRole('button', { name: 'Record it as received' }).click();
	await expect(workshop.getByRole('alert').filter({ hasText: 'quarantine' })).toBeVisible();
	await workshop.getByLabel('Cause found').selectOption('mechanical_damage');
	await workshop.getByLabel('Findings').fill('Case crushed at one corner; two cells open circuit.');
	await workshop.getByRole('button', { name: 'Record the inspection' }).click();
	await expect(workshop.getByRole('main')).toContainText('Mechanical damage');
	await workshop.getByLabel('Scrap').check();
	await workshop.getByLabel('Reason for scrapping').fill('Cells open circuit after crushing.');
	await workshop.getByRole('button', { name: 'Record it' }).click();
	await expect(workshop.getByRole('main')).toContainText('This return is finished');
	await workshop.screenshot({ path: 'test-results/returns-desk.png', fullPage: true });
	expect((await (await officer.request.get(`/api/modules/${serial}`)).json()).state).toBe(
		'scrapped'
	);

	// The dealer follows every step on the claim page and by e-mail.
	await dealer.goto(claimUrl);
	const steps = dealer.getByTestId('return-steps');
	await expect(steps).toContainText(raNumber);
	await expect(steps).toContainText('Case or terminals damaged');
	await expect(steps).toContainText('Mechanical damage');
	await expect(steps).toContainText('Scrapped');
	const mails = (
		await (await admin.request.get('/api/outbox?to=dealer@saltmarsh.example')).json()
	).items.filter((m: { subject: string }) => m.subject.startsWith(`Return ${raNumber}`));
	expect(mails).toHaveLength(3);
});

// A 1×1 PNG (the smallest image of the W3C PNG specification's chunk layout), twice over.
const PNG = Buffer.from(
	'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNkYPhfDwAChwGA60e6kgAAAABJRU5ErkJggg==',
	'base64'
);

test('a dealer files an on-delivery claim with photos', async ({ as }) => {
	const dealer = await as('ridgeline');
	const shipped = await (
		await dealer.request.get('/api/modules?state=shipped&sort=serial&dir=desc&pageSize=5')
	).json();
	const serial: string = shipped.items[0].serial;
	await dealer.goto('/claims/new');
	await dealer.locator('input[name="kind"][value="on-delivery"]').check();
	await dealer.getByLabel(/Serials/).fill(serial);
	await dealer.locator('select[name="fault"]').selectOption('damaged_in_transport');
	await expect(dealer.getByTestId('no-throughput')).toBeVisible();
	await dealer
		.locator('textarea[name="description"]')
		.fill('The case is cracked at one corner and a terminal cover is missing.');
	await dealer.locator('input[name="photos"]').setInputFiles([
		{ name: 'corner.png', mimeType: 'image/png', buffer: PNG },
		{ name: 'label.png', mimeType: 'image/png', buffer: PNG }
	]);
	await dealer.getByRole('button', { name: 'File the claim' }).click();
	await expect(dealer).toHaveURL(/\/claims\/\d+\?filed/);
	await expect(dealer.locator('img[src^="/api/attachments/"]')).toHaveCount(2);
	await dealer.screenshot({ path: 'test-results/claim-on-delivery.png', fullPage: true });
	expect((await (await dealer.request.get(`/api/modules/${serial}`)).json()).state).toBe(
		'claim_open'
	);
});
