import { test, expect } from './roles';

test('a campaign over a cell lot reaches both dealers, each resolves its own modules, completion rises to 100 %', async ({
	as
}) => {
	const officer = await as('warranty');
	const bad = await officer.request.post('/api/campaigns', {
		data: {
			title: 'Nothing here',
			notice: 'A campaign with no modules must be refused.',
			remedy: 'None at all.',
			select: { lot: 'NO-SUCH-LOT' }
		}
	});
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toMatch(/names no modules/);

	// From the traceability result: the campaign form opens with the lot filled in.
	await officer.goto('/trace?lot=HCL-2640-B');
	await expect(officer.getByTestId('trace-result')).toBeVisible();
	await officer.getByRole('link', { name: 'Open a campaign for these modules' }).click();
	await expect(officer).toHaveURL(/\/campaigns\?lot=HCL-2640-B#open-campaign$/);
	await expect(officer.getByLabel('Cell lot')).toHaveValue('HCL-2640-B');
	await officer.getByLabel('Title').fill('Interconnect torque check, lot HCL-2640-B');
	await officer
		.getByLabel('Notice to dealers')
		.fill('Some modules with cells of lot HCL-2640-B may have under-torqued interconnects.');
	await officer
		.getByLabel('Remedy')
		.fill('Check and re-torque the interconnects; report the outcome.');
	await officer.getByRole('button', { name: 'Open the campaign' }).click();
	await expect(officer.getByRole('heading', { name: /SC-\d{4}-\d{3}/ })).toBeVisible();
	const id = Number(new URL(officer.url()).pathname.split('/').pop());
	const overall = await (await officer.request.get(`/api/campaigns/${id}`)).json();
	const dealers = overall.dealers.map((d: { dealer: string }) => d.dealer);
	expect(dealers).toEqual(expect.arrayContaining(['Ridgeline Off-Grid Supply', 'Saltmarsh Solar']));
	expect(overall.completionPct).toBe(0);

	for (const role of ['saltmarsh', 'ridgeline'] as const) {
		const dealer = await as(role);
		const mine = await (await dealer.request.get(`/api/campaigns/${id}/modules`)).json();
		const own = role === 'saltmarsh' ? 'Saltmarsh Solar' : 'Ridgeline Off-Grid Supply';
		expect(mine.items.length).toBeGreaterThan(0);
		expect(mine.items.every((i: { dealer: string }) => i.dealer === own)).toBe(true);
		const scoped = await (await dealer.request.get(`/api/campaigns/${id}`)).json();
		expect(scoped.dealers.map((d: { dealer: string }) => d.dealer)).toEqual([own]);
		const [first, ...rest] = mine.items as { serial: string }[];
		const ack = await dealer.request.post(`/api/campaigns/${id}/modules/${first.serial}`, {
			data: { action: 'acknowledge' }
		});
		expect(ack.status()).toBe(200);
		const twice = await dealer.request.post(`/api/campaigns/${id}/modules/${first.serial}`, {
			data: { action: 'acknowledge' }
		});
		expect(twice.status()).toBe(409);
		expect((await twice.json()).message).toMatch(/already acknowledged/);
		// Resolving another dealer's module answers like one not on the list.
		const other =
			(overall as { dealers: { dealer: string }[] }) && role === 'saltmarsh'
				? 'ridgeline'
				: 'saltmarsh';
		const theirs = await (
			await (await as(other)).request.get(`/api/campaigns/${id}/modules`)
		).json();
		const foreign = await dealer.request.post(
			`/api/campaigns/${id}/modules/${theirs.items[0].serial}`,
			{ data: { action: 'resolve', outcome: 'reworked' } }
		);
		expect(foreign.status()).toBe(404);
		// The first through the page, the rest through the API.
		await dealer.goto(`/campaigns/${id}`);
		const row = dealer.getByTestId('campaign-row').filter({ hasText: first.serial });
		await row.getByLabel(`Outcome for ${first.serial}`).selectOption('reworked');
		await row.getByRole('button', { name: 'Resolve' }).click();
		await expect(row).toContainText('Resolved: Reworked');
		for (const m of rest) {
			const r = await dealer.request.post(`/api/campaigns/${id}/modules/${m.serial}`, {
				data: { action: 'resolve', outcome: 'inspected_ok', note: 'Torque checked.' }
			});
			expect(r.status()).toBe(200);
		}
		await dealer.reload();
		await expect(dealer.getByTestId('completion-pct')).toHaveText('100 %');
	}
	// Modules still in the workshop are followed by the assembler's staff.
	const left = await (await officer.request.get(`/api/campaigns/${id}/modules`)).json();
	for (const m of left.items.filter((i: { state: string }) => i.state !== 'resolved'))
		await officer.request.post(`/api/campaigns/${id}/modules/${m.serial}`, {
			data: { action: 'resolve', outcome: 'inspected_ok' }
		});
	await officer.goto(`/campaigns/${id}`);
	await expect(officer.getByTestId('completion-pct')).toHaveText('100 %');
	await officer.screenshot({ path: 'test-results/campaign-complete.png', fullPage: true });
});
