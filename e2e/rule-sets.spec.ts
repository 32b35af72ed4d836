import { test, expect } from './roles';

test('the admin adds a market rule set, a wrong limit is refused in words, a dealer is put on it, and a dealer may not open the page', async ({
	as
}) => {
	const admin = await as('admin');
	await admin.goto('/admin/rule-sets');
	await expect(admin.getByRole('heading', { name: 'Market “default”' })).toBeVisible();
	const form = admin.locator('form[action="?/add"]');
	await form.getByLabel('Market code').fill('coast-region');
	await form.getByLabel('Name as the certificate prints it').fill('Coast region wiring rules');
	await form.getByLabel('In force from').fill('2026-11-01');
	// A factor below 1 would let a device smaller than the current pass.
	await form.getByLabel(/Device current rating: factor/).fill('0,8');
	await form.getByRole('button', { name: 'Save as a new version' }).click();
	await expect(form.getByRole('alert')).toContainText(
		'Device current factor must be between 1 and 3 ×.'
	);
	await form.getByLabel(/Device current rating: factor/).fill('1,5');
	await form
		.getByLabel('Device current rating', { exact: true })
		.fill('Coast wiring rules cl. 7.2');
	await form.getByRole('button', { name: 'Save as a new version' }).click();
	await expect(admin.getByRole('status')).toContainText('Version 1 of “coast-region” saved.');
	const coast = admin.locator('section', {
		has: admin.getByRole('heading', { name: 'Market “coast-region”' })
	});
	await expect(coast.getByRole('row', { name: /Coast region wiring rules/ })).toContainText(
		'1.5 ×'
	);

	const northbank = admin.locator('form[action="?/market"]', { hasText: 'Northbank Electrical' });
	await northbank.getByRole('combobox').selectOption('coast-region');
	await northbank.getByRole('button', { name: 'Save' }).click();
	await expect(admin.getByRole('status')).toContainText('Dealer market saved.');
	await admin.reload();
	await expect(
		admin
			.locator('form[action="?/market"]', { hasText: 'Northbank Electrical' })
			.getByRole('combobox')
	).toHaveValue('coast-region');

	const dealer = await as('ridgeline');
	const res = await dealer.goto('/admin/rule-sets');
	expect(res?.status()).toBe(403);
});
