import { test, expect } from './roles';

const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';

test('a failed module is reworked, retested and passes; another is scrapped and its public page says "Do not install"', async ({
	as,
	browser
}) => {
	const workshop = await as('workshop');
	const failed = await (
		await workshop.request.get('/api/modules?state=test_failed&sort=serial&dir=desc&pageSize=10')
	).json();
	expect(failed.items.length).toBeGreaterThanOrEqual(2);
	const [reworkSerial, scrapSerial] = failed.items.map((i: { serial: string }) => i.serial);

	// Anyone scanning the failed module reads the warning first.
	const anon = await browser.newContext();
	const pub = await anon.newPage();
	await pub.goto(`/m/${reworkSerial}`);
	await expect(pub.getByTestId('condition')).toContainText('Do not install');
	await expect(pub.getByTestId('condition')).toContainText('failed its factory test');
	await expect(pub.getByTestId('warranty-pill')).toHaveText('No warranty');

	// Rework on the module's record: the measured values of the failed test are shown.
	await workshop.goto(`/m/${reworkSerial}`);
	await expect(workshop.getByTestId('factory-tests')).toContainText('Fail');
	await expect(
		workshop.getByTestId('safety-cautions').filter({ hasText: /vent flammable gas or ignite/ })
	).toBeVisible();
	await workshop
		.getByLabel('What was done')
		.fill('Replaced cell group 4 and rebalanced the module.');
	await workshop.getByRole('button', { name: 'Record the rework' }).click();
	await expect(workshop.getByRole('status').filter({ hasText: 'Rework recorded' })).toBeVisible();
	await expect(workshop.getByTestId('module-state')).toHaveText('Built, awaiting test');
	await expect(workshop.getByTestId('factory-tests')).toContainText('(superseded)');

	// The retest arrives from the rig and passes.
	const testedAt = new Date(Date.now() - 60_000).toISOString();
	const csv = `${HEADER}\r\n${reworkSerial},${testedAt},46.9,2390,5.1,51.2,8,500,22.5,RIG-2,T.Vale\r\n`;
	const res = await workshop.request.post(
		'/api/imports/factory-tests?commit=accepted&name=retest.csv',
		{
			headers: { 'content-type': 'text/csv' },
			data: csv
		}
	);
	expect(res.status()).toBe(201);
	await workshop.reload();
	await expect(workshop.getByTestId('module-state')).toHaveText('In stock');
	await expect(workshop.getByTestId('factory-tests')).toContainText('46.9');
	await expect(workshop.getByTestId('factory-tests')).toContainText('(current)');
	await workshop.screenshot({ path: 'test-results/module-reworked.png', fullPage: true });
	await pub.reload();
	await expect(pub.getByTestId('condition')).toHaveAttribute('data-installable', 'true');

	// Scrap the other one, with its reason.
	await workshop.goto(`/m/${scrapSerial}`);
	workshop.once('dialog', (d) => d.accept());
	await workshop.getByLabel('Reason').fill('Case cracked at the terminal block during the test.');
	await workshop.getByRole('button', { name: 'Scrap this module' }).click();
	await expect(workshop.getByTestId('module-state')).toHaveText('Scrapped');

	await pub.setViewportSize({ width: 390, height: 844 });
	await pub.goto(`/m/${scrapSerial}`);
	await expect(pub.getByTestId('condition')).toContainText('Do not install');
	await expect(pub.getByTestId('condition')).toContainText('Case cracked at the terminal block');
	await expect(pub.getByTestId('passport-status')).toHaveText('Waste');
	await pub.screenshot({ path: 'test-results/public-scrapped-phone.png', fullPage: true });
	const json = await (await pub.request.get(`/api/public/modules/${scrapSerial}`)).json();
	expect(json).toMatchObject({ installable: false, status: 'waste' });
	expect(json.condition.warning).toBe('Do not install');

	// Scrapping a module in service is refused through the API, with the reason.
	const inService = await (
		await workshop.request.get('/api/modules?state=commissioned&pageSize=1')
	).json();
	const refused = await workshop.request.post(`/api/modules/${inService.items[0].serial}/scrap`, {
		data: { reason: 'Trying to scrap a module in service.' }
	});
	expect(refused.status()).toBe(409);
	expect((await refused.json()).message).toMatch(/in service/);
	await anon.close();
});
