import { test, expect } from './roles';

test('the warranty officer reads rates with intervals, the life model and the reserve of the demo fleet', async ({
	as
}) => {
	const officer = await as('warranty');
	await officer.setViewportSize({ width: 1366, height: 900 });
	await officer.goto('/reliability?asOf=2026-12-01');
	await expect(officer.getByRole('heading', { name: 'Fleet reliability' })).toBeVisible();
	await expect(officer.getByTestId('rate')).not.toHaveText('—');
	await expect(officer.getByRole('main')).toContainText(/95 % [\d.]+ – [\d.]+ \(exact Poisson\)/);
	// Rates by cell lot, with the early-failing lot in the table and the chart drawn.
	await expect(officer.getByTestId('slices')).toContainText('HCL-2015-C');
	await expect(officer.getByTestId('rate-chart').locator('circle')).not.toHaveCount(0);
	// The life model: β with bounds, a sentence on what it says, the probability plot.
	await expect(officer.getByTestId('weibull')).toContainText('Shape β');
	await expect(officer.getByTestId('reading')).toContainText('β =');
	await expect(officer.getByTestId('probability-plot').locator('circle')).toHaveCount(8);
	// The reserve, in claims and in money, with the assumptions beside it.
	await expect(officer.getByTestId('reserve')).toContainText('Next 1 year');
	await expect(officer.getByTestId('reserve')).toContainText('To the end of every warranty');
	await expect(officer.getByTestId('reserve-cost')).toHaveText(/^\d[\d,]*$/);
	await expect(officer.getByTestId('reserve-chart').locator('path')).toHaveCount(2);
	await expect(officer.getByTestId('assumptions')).toContainText('censored');
	await officer.screenshot({ path: 'test-results/reliability-desktop.png', fullPage: true });

	// Filter to the early-failing lot through the form, slice by climate.
	await officer.locator('select[name="lot"]').selectOption('HCL-2015-C');
	await officer.locator('select[name="by"]').selectOption('climate');
	await officer.getByRole('button', { name: 'Show' }).click();
	await expect(officer).toHaveURL(/lot=HCL-2015-C/);
	await expect(officer.getByTestId('slices')).toContainText('tropical');

	await officer.setViewportSize({ width: 390, height: 844 });
	await officer.goto('/reliability?asOf=2026-12-01&by=dealer');
	await officer.screenshot({ path: 'test-results/reliability-phone.png', fullPage: true });

	// A selection with too few failures says why there is no fit.
	await officer.goto('/reliability?asOf=2021-01-01');
	await expect(officer.getByTestId('refusal')).toContainText('at least two failures');
});

test('the reliability API keeps its contract and answers bad input with a 400 a person can act on', async ({
	as
}) => {
	const officer = await as('warranty');
	const r = await officer.request.get('/api/reliability?asOf=2026-12-01&model=TC-HC-48');
	expect(r.status()).toBe(200);
	const body = await r.json();
	for (const k of [
		'unitsInService',
		'unitYears',
		'claims',
		'ratePer1000UnitYears',
		'rateCI95',
		'weibull',
		'reserve'
	])
		expect(body).toHaveProperty(k);
	expect(body.rateCI95).toHaveLength(2);
	expect(body.weibull.betaCI95).toHaveLength(2);

	const bad = await officer.request.get('/api/reliability?asOf=2023-02-30');
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toMatch(/real date/);

	const fit = await officer.request.post('/api/reliability/weibull', {
		data: { times: [1, 2, 3, 4, 5], censored: [false, false, true, false, true] }
	});
	expect(fit.status()).toBe(200);
	const f = await fit.json();
	for (const k of ['beta', 'eta', 'failures', 'censored', 'betaCI95', 'etaCI95'])
		expect(f).toHaveProperty(k);
	expect(f.failures).toBe(3);

	const one = await officer.request.post('/api/reliability/weibull', {
		data: { times: [1, 2], censored: [false, true] }
	});
	expect(one.status()).toBe(422);
	expect((await one.json()).message).toMatch(/at least two failures/);

	const mismatch = await officer.request.post('/api/reliability/weibull', {
		data: { times: [1, 2], censored: [false] }
	});
	expect(mismatch.status()).toBe(400);
	expect((await mismatch.json()).message).toMatch(/one censored flag per time/);

	const huge = await officer.request.post('/api/reliability/weibull', {
		data: { times: Array.from({ length: 100_001 }, () => 1), censored: [] }
	});
	expect(huge.status()).toBe(400);
	expect((await huge.json()).message).toMatch(/At most 100,000 times/);

	const rate = await officer.request.post('/api/reliability/rate', {
		data: { events: 4, exposure: 1000 }
	});
	expect(await rate.json()).toEqual({
		ratePer1000: 4,
		ci95: [expect.closeTo(1.0899, 3), expect.closeTo(10.2416, 3)]
	});
	const neg = await officer.request.post('/api/reliability/rate', {
		data: { events: -1, exposure: 0 }
	});
	expect(neg.status()).toBe(400);

	const dealer = await as('saltmarsh');
	expect((await dealer.request.get('/api/reliability')).status()).toBe(403);
	const page = await dealer.goto('/reliability');
	expect(page?.status()).toBe(403);
});

test('the assessment says the basis of its equivalent full cycles and accepts a temperature profile', async ({
	as
}) => {
	const officer = await as('warranty');
	const terms = {
		years: 15,
		ratedCycles: 20000,
		endRetentionPct: 80,
		referenceTempC: 25,
		hotTempC: 55,
		hotRatedCycles: 4000
	};
	const res = await officer.request.post('/api/warranty/assess', {
		data: {
			terms,
			commissionedOn: '2020-03-01',
			claimedOn: '2024-06-10',
			ratedCapacityAh: 46.5,
			measuredCapacityAh: 40,
			usableWh: 2300,
			cycles: 3000,
			avgCellTempC: 30,
			temperatureProfile: [
				{ tempC: 15, hours: 100 },
				{ tempC: 45, hours: 100 }
			]
		}
	});
	expect(res.status()).toBe(200);
	const a = await res.json();
	expect(a.effectiveCellTempC).toBeCloseTo(35.13, 2);
	expect(a.temperatureBasis).toBe('profile');

	await officer.goto('/claims');
	await officer
		.getByRole('link', { name: /^CL-\d{4}-/ })
		.first()
		.click();
	await expect(officer.getByTestId('efc')).toContainText(
		/energy throughput ÷ usable energy|cycle count/
	);
});
