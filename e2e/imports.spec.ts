import { test, expect } from './roles';

test('upload a rig file with bad rows, see them explained, store the rest, see states and batch quality', async ({
	as
}) => {
	const page = await as('workshop');
	// Six fresh TC-HC-48 modules, five built through the API.
	await page.goto('/allocations');
	await page.getByLabel('Model').selectOption({ label: 'TC-HC-48 — TC-HC 48 V module' });
	await page.getByLabel('How many').fill('6');
	await page.getByRole('button', { name: 'Reserve serials' }).click();
	await page.getByRole('link', { name: /A4 sheet/ }).click();
	const serials = await page
		.locator('.module-label')
		.evaluateAll((els) => els.map((e) => e.getAttribute('data-serial')!));
	for (const s of serials.slice(0, 5)) {
		const r = await page.request.post(`/api/modules/${s}/build`, {
			data: {
				cellLots: ['HCL-2611-C'],
				checks: [
					'interconnects_torqued',
					'balancing_verified',
					'polarity_marked',
					'case_closed',
					'label_applied'
				]
			}
		});
		expect(r.status()).toBe(201);
	}
	const t = (m: number) => new Date(Date.now() - m * 60_000).toISOString();
	const csv = [
		'Serial;Tested At;Capacity (Ah);DCIR [mOhm];Cell spread (mV);Insulation (MOhm);Rig',
		`${serials[0]};${t(50)};46,9;5,1;7;650;RIG-2`,
		`${serials[1]};${t(45)};47,2;5,0;6;640;RIG-2`,
		`${serials[2]};${t(40)};44,1;5,2;8;600;RIG-2`,
		`${serials[3]};${t(35)};46,5;7,9;9;620;RIG-2`,
		`${serials[4]};2099-01-01T00:00:00Z;46,5;5,0;9;620;RIG-2`,
		`${serials[5]};${t(30)};46,5;5,0;9;620;RIG-2`,
		`PL48-26-ZZZZZZZ;${t(25)};46,5;5,0;9;620;RIG-2`
	].join('\r\n');

	await page.goto('/imports');
	await page.getByLabel('Rig CSV file').setInputFiles({
		name: 'rig2-shift-a.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from('\uFEFF' + csv)
	});
	const preview = page.getByTestId('import-preview');
	await expect(preview.getByTestId('count-accepted')).toHaveText('4');
	await expect(preview.getByTestId('count-rejected')).toHaveText('3');
	const rejected = preview.getByTestId('rejected-rows');
	await expect(rejected).toContainText('in the future');
	await expect(rejected).toContainText('not built yet');
	await expect(rejected).toContainText('not a valid serial');
	await expect(preview.getByRole('link', { name: /error report/ })).toHaveAttribute(
		'href',
		/\/api\/imports\/\d+\/errors\.csv/
	);
	await page.screenshot({ path: 'test-results/import-preview.png', fullPage: true });
	const report = await page.request.get(
		(await preview.getByRole('link', { name: /error report/ }).getAttribute('href'))!
	);
	expect(await report.text()).toContain('not built yet');

	await page.getByRole('button', { name: 'Store 4 accepted results' }).click();
	await expect(page.getByRole('status').filter({ hasText: 'Stored:' })).toContainText(
		'2 passed, 2 failed'
	);

	await page.goto(`/m/${serials[0]}`);
	await expect(page.getByTestId('module-state')).toHaveText('In stock');
	await page.goto(`/m/${serials[2]}`);
	await expect(page.getByTestId('module-state')).toHaveText('Failed factory test');
	await expect(page.getByTestId('timeline')).toContainText(
		/Capacity 44.1 Ah below the 45(\.0)? Ah minimum/
	);

	await page.goto('/quality');
	await expect(page.getByRole('main')).toContainText('Cpk');
	await page.screenshot({ path: 'test-results/quality.png', fullPage: true });
});

test('rig tokens: a rig sends a file with its token; a revoked token is refused', async ({
	as,
	playwright
}) => {
	const admin = await as('admin');
	await admin.goto('/admin/tokens');
	await admin.getByLabel('Rig or machine').fill('Rig 3, line B');
	await admin.getByRole('button', { name: 'Create token' }).click();
	const secret = (await admin.getByTestId('token-secret').textContent())!.trim();
	const rig = await playwright.request.newContext({
		baseURL: admin.url().replace(/\/admin.*/, '')
	});
	const empty = await rig.post('/api/imports/factory-tests?commit=accepted', {
		headers: { authorization: `Bearer ${secret}`, 'content-type': 'text/csv' },
		data: 'serial,tested_at\n'
	});
	expect(empty.status()).toBe(400);
	expect((await empty.json()).message).toMatch(/Missing required column|no data rows/);
	const other = await rig.get('/api/modules/PL48-26-0000016', {
		headers: { authorization: `Bearer ${secret}` }
	});
	expect(other.status()).toBe(403);
	await admin.reload();
	await admin
		.getByRole('row', { name: /Rig 3, line B/ })
		.getByRole('button', { name: 'Revoke' })
		.click();
	await expect(admin.getByRole('row', { name: /Rig 3, line B/ })).toContainText('revoked');
	const refused = await rig.post('/api/imports/factory-tests', {
		headers: { authorization: `Bearer ${secret}`, 'content-type': 'text/csv' },
		data: 'serial,tested_at\n'
	});
	expect(refused.status()).toBe(401);
	expect((await refused.json()).message).toMatch(/revoked/);
	await rig.dispose();
});

test('an oversized upload is refused with a size message', async ({ as }) => {
	const page = await as('workshop');
	const big = Buffer.alloc(26 * 1024 * 1024, 'a');
	const res = await page.request.post('/api/imports/factory-tests', {
		headers: { 'content-type': 'text/csv' },
		data: big
	});
	expect(res.status()).toBe(413);
	expect((await res.json()).message).toMatch(/limit is 25\.0 MB/);
});
