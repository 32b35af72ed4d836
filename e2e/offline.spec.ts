import { test, expect as baseExpect, stateFile } from './roles';
import { fillSite, fillSystem, phoneAsTech, shippedSerials } from './site-forms';
import { answerYes, CHECKS, field, fillFields, plainPng, signOff } from './checklist';

// The machine is shared: give the phone's pages time (service worker install, IndexedDB).
const expect = baseExpect.configure({ timeout: 20_000 });

/** The offline tests' system: two TC-HC-48 in one string on a 70–130 V inverter. */
const twoInSeries = (name: string) => ({
	name,
	model: 'TC-HC-48',
	series: 2,
	parallel: 1,
	inverter: 'Invented 5 kW inverter',
	minV: 70,
	maxV: 130
});

test.use({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true });

test('a technician with no signal: site taken offline, system, modules, checklist with photos and sign-off, reload, back online, synced once, certificate issued, replay stores nothing', async ({
	browser
}) => {
	test.setTimeout(120_000);
	const ctx = await phoneAsTech(browser);
	const page = await ctx.newPage();
	const serials = await shippedSerials(page, 2);
	expect(serials).toHaveLength(2);

	// With a signal: the site is recorded and taken offline.
	await page.goto('/sites/new');
	await fillSite(page, {
		name: 'Cairn Ridge relay hut',
		kind: 'Telecom or radio hut',
		owner: 'Brannoc Hale',
		contact: '+61 400 555 010',
		address: 'Cairn Ridge track, km 14, Ridgeline hills'
	});
	await page.getByRole('button', { name: 'Save site' }).click();
	await page.waitForURL(/\/sites\/\d+/);
	const sitePath = new URL(page.url()).pathname;
	await page.evaluate(() => navigator.serviceWorker.ready);
	await page.getByTestId('take-offline').click();
	await expect(page.getByText(/pages kept on this phone/)).toBeVisible();

	// No network from here on.
	await ctx.setOffline(true);
	await page.goto(sitePath);
	await expect(page).toHaveURL(new RegExp(`/offline${sitePath}$`));
	await expect(page.getByTestId('offline-note')).toContainText('No connection');
	// The badge says the phone is offline, then counts what waits on it, one change at a time.
	const badge = page.getByTestId('offline-badge');
	await expect(badge).toHaveText(/^\s*Offline\s*$/);
	await expect(page.getByRole('heading', { name: 'Cairn Ridge relay hut' })).toBeVisible();
	await page.screenshot({ path: 'test-results/offline-site.png', fullPage: true });

	await page.getByRole('link', { name: /Add a system/ }).click();
	await fillSystem(page, twoInSeries('Relay bank'));
	await page.getByRole('button', { name: 'Save system' }).click();
	await expect(page.getByText('System saved. Scan the modules into their places.')).toBeVisible();
	await expect(badge).toHaveText(/^\s*1 change waiting\s*$/);

	const scan = page.getByTestId('place-scan');
	for (const [i, s] of serials.entries()) {
		await scan.fill(s);
		await scan.press('Enter');
		await expect(page.getByRole('status').filter({ hasText: s })).toBeVisible();
		await expect(badge).toHaveText(new RegExp(`^\\s*${2 + i} changes waiting\\s*$`));
	}
	await expect(page.getByText('2 of 2 placed')).toBeVisible();
	await page.screenshot({ path: 'test-results/offline-system.png', fullPage: true });

	await page.getByRole('link', { name: 'Commission this system' }).click();
	await page.getByText('I have read the cautions', { exact: true }).click();
	// 2 × TC-HC-48 (invented: 22 cells, 2.35 V nominal): a string near 103 V; IEC 60364-6
	// Table 6.1 asks 500 V DC and at least 1.0 MΩ for it.
	await fillFields(page, {
		'moduleOcvV.1.1': '50,60',
		'moduleOcvV.1.2': '50,62',
		'stringVoltageV.1': '101,2',
		insulationTestV: '500',
		insulationMohm: '0,4'
	});
	// The live verdicts run on the phone without a network.
	await expect(
		page.getByText(/0\.4 MΩ at 500 V is below the 1(\.0)? MΩ minimum of IEC 60364-6/)
	).toBeVisible();
	await field(page, 'insulationMohm').fill('150');
	await answerYes(page, CHECKS);
	// One string of TC-HC-48: its maximum voltage over the module's internal resistance is
	// about 10 kA prospective; a 25 kA device breaks it.
	await fillFields(page, {
		deviceRatingA: '200',
		deviceDcRatingV: '150',
		deviceBreakingKA: '25',
		ambientC: '18'
	});
	for (const [i, caption] of ['Rack', 'Tester reading'].entries()) {
		await page.getByLabel('Caption (optional)').fill(caption);
		await page.locator('input[name="photo"]').setInputFiles({
			name: `photo-${i}.png`,
			mimeType: 'image/png',
			buffer: plainPng(90 + i * 80)
		});
		await expect(page.locator('img[src^="/api/attachments/"]')).toHaveCount(i + 1);
		await expect(badge).toHaveText(new RegExp(`^\\s*${4 + i} changes waiting\\s*$`));
	}
	await signOff(page, {
		technicianName: 'Joss Carrow',
		licenceNumber: 'EL-55120',
		handoverName: 'Brannoc Hale'
	});
	await page.getByRole('button', { name: /Submit/ }).click();
	await expect(page.getByTestId('queued-note')).toContainText('certificate is issued then');
	await expect(page.getByTestId('offline-badge')).toHaveText(/6 changes waiting/);
	await page.screenshot({ path: 'test-results/offline-checklist-kept.png', fullPage: true });

	// A reload with no network: the shell comes from the service worker, the work from the phone.
	await page.reload();
	await expect(page.getByRole('heading', { name: 'Commission Relay bank' })).toBeVisible();
	await expect(page.locator('img[src^="/api/attachments/"]')).toHaveCount(2);
	await expect(page.getByText(/Joss Carrow · pass/)).toBeVisible();
	await expect(page.getByTestId('offline-badge')).toHaveText(/6 changes waiting/);
	await page.goto('/fleet');
	await expect(page.getByText('/fleet needs a connection')).toBeVisible();

	// The network is back: everything goes once, in order.
	await ctx.setOffline(false);
	await page.goto('/offline');
	const queued = page.getByTestId('queued-op');
	await expect(queued).toHaveCount(6);
	await expect(page.locator('[data-testid="queued-op"][data-status="applied"]')).toHaveCount(6, {
		timeout: 20_000
	});
	await expect(page.getByTestId('offline-badge')).toHaveCount(0);
	await page.screenshot({ path: 'test-results/offline-synced.png', fullPage: true });
	await page.getByRole('link', { name: 'Open the certificate' }).click();
	await expect(page.getByText(/PLC-\d{4}-\d{5}/).first()).toBeVisible();
	await page.screenshot({ path: 'test-results/offline-certificate.png', fullPage: true });
	const rec = await (await page.request.get(`/api/modules/${serials[0]}`)).json();
	expect(rec.state).toBe('commissioned');

	// The same queue sent again: every operation is a duplicate with the same ref, nothing new stored.
	const replay = await page.evaluate(async () => {
		const open = indexedDB.open('packledger-offline');
		const meta: IDBDatabase = await new Promise((r) => (open.onsuccess = () => r(open.result)));
		const user = await new Promise<{ user: { id: number } }>((r) => {
			const q = meta.transaction('meta').objectStore('meta').get('user');
			q.onsuccess = () => r(q.result);
		});
		const o2 = indexedDB.open(`packledger-offline-u${user.user.id}`);
		const db: IDBDatabase = await new Promise((r) => (o2.onsuccess = () => r(o2.result)));
		const ops = await new Promise<
			{
				id: string;
				type: string;
				payload: Record<string, unknown>;
				ref: unknown;
				blob?: Blob;
				seq: number;
			}[]
		>((r) => {
			const q = db.transaction('ops').objectStore('ops').getAll();
			q.onsuccess = () => r(q.result);
		});
		ops.sort((a, b) => a.seq - b.seq);
		const wire = await Promise.all(
			ops.map(async (o) => {
				if (!o.blob) return { id: o.id, type: o.type, payload: o.payload };
				const bytes = new Uint8Array(await o.blob.arrayBuffer());
				const base64 = btoa(String.fromCharCode(...bytes));
				return {
					id: o.id,
					type: o.type,
					payload: { ...o.payload, photo: { ...(o.payload.photo as object), base64 } }
				};
			})
		);
		const res = await fetch('/api/sync', {
			method: 'POST',
			headers: { 'content-type': 'application/json' },
			body: JSON.stringify({ operations: wire })
		});
		return { status: res.status, body: await res.json(), refs: ops.map((o) => o.ref) };
	});
	expect(replay.status).toBe(200);
	expect(replay.body.results.map((r: { status: string }) => r.status)).toEqual(
		Array(6).fill('duplicate')
	);
	expect(replay.body.results.map((r: { ref: unknown }) => r.ref)).toEqual(replay.refs);
	const systemId = replay.refs[0];
	await page.goto(`/systems/${systemId}/commission`);
	await expect(page.getByText('Already commissioned')).toBeVisible();
	await expect(page.locator('img[src^="/api/attachments/"]')).toHaveCount(2);
	await page.goto(sitePath);
	await expect(page.locator(`a[href="/systems/${systemId}"]`)).toHaveCount(1);
	await expect(page.locator('a[href^="/systems/"]')).toHaveCount(1);
	await ctx.close();
});

test('a slot filled by a colleague while the phone was offline: the phone shows what differs and the technician chooses the next empty slot', async ({
	browser
}) => {
	test.setTimeout(120_000);
	const phone = { viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true };
	const ctx = await browser.newContext({ storageState: stateFile('ridgelineTech'), ...phone });
	const page = await ctx.newPage();
	const [mine, theirs] = await shippedSerials(page, 2);
	await page.goto('/sites/new');
	await fillSite(page, {
		name: 'Tor End pump shed',
		kind: 'Workshop, farm or yard',
		owner: 'Elowen Marsk',
		contact: 'elowen@tor-end.example',
		address: 'Tor End lane, Ridgeline hills'
	});
	await page.getByRole('button', { name: 'Save site' }).click();
	await page.getByRole('link', { name: /Add a system/ }).click();
	await fillSystem(page, twoInSeries('Pump bank'));
	await page.getByRole('button', { name: 'Save system' }).click();
	await page.waitForURL(/\/systems\/\d+/);
	const systemPath = new URL(page.url()).pathname;
	await page.evaluate(() => navigator.serviceWorker.ready);
	await page.getByTestId('take-offline').click();
	await expect(page.getByText(/pages kept on this phone/)).toBeVisible();

	await ctx.setOffline(true);
	await page.goto(systemPath);
	await page.getByTestId('place-scan').fill(mine);
	await page.getByTestId('place-scan').press('Enter');
	await expect(page.getByRole('status').filter({ hasText: mine })).toBeVisible();

	// Meanwhile a colleague with a signal puts another module at string 1, position 1.
	const other = await browser.newContext({ storageState: stateFile('ridgelineTech'), ...phone });
	const colleague = await other.newPage();
	await colleague.goto(systemPath);
	await colleague.getByTestId('place-scan').fill(theirs);
	await colleague.getByTestId('place-scan').press('Enter');
	await expect(colleague.getByRole('status').filter({ hasText: theirs })).toBeVisible();
	await other.close();

	await ctx.setOffline(false);
	await page.goto('/offline');
	const op = page.getByTestId('queued-op').filter({ hasText: mine });
	await expect(op).toHaveAttribute('data-status', 'rejected');
	await expect(op.getByText('Changed in the register')).toBeVisible();
	await expect(op).toContainText(`String 1, position 1 already holds ${theirs}.`);
	await expect(op).toContainText(`${mine} into Pump bank, string 1 position 1`);
	await expect(page.getByTestId('offline-badge')).toHaveText(/1 change waiting, 1 to check/);
	await page.screenshot({ path: 'test-results/offline-conflict.png', fullPage: true });
	await op.getByRole('button', { name: 'Place it in the next empty slot instead' }).click();
	await expect(op).toHaveAttribute('data-status', 'applied');
	const rec = await (await page.request.get(`/api/modules/${mine}`)).json();
	expect(rec.state).toBe('installed');
	await page.goto(systemPath);
	await expect(page.getByText('2 of 2 placed')).toBeVisible();
	await ctx.close();
});

test('sync answers 400 for a malformed request and 413 for an oversized one, and refuses other roles', async ({
	as
}) => {
	const page = await as('ridgelineTech');
	const bad = await page.request.post('/api/sync', { data: { operations: [] } });
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toBe('Send at least one operation.');
	const huge = await page.request.post('/api/sync', {
		headers: { 'content-type': 'application/json' },
		data: 'x'.repeat(17 * 1024 * 1024)
	});
	expect(huge.status()).toBe(413);
	expect((await huge.json()).message).toMatch(/at most 16 MB; send fewer changes/);
	const dealer = await as('ridgeline');
	const refused = await dealer.request.post('/api/sync', {
		data: { operations: [{ id: crypto.randomUUID(), type: 'createSite', payload: {} }] }
	});
	expect(refused.status()).toBe(403);
});

test('a field page opened with a signal opens again without one; a page never opened says it is not on the phone', async ({
	browser
}) => {
	const phone = { viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true };
	const ctx = await browser.newContext({ storageState: stateFile('ridgelineTech'), ...phone });
	const page = await ctx.newPage();
	await page.goto('/sites');
	await page.evaluate(() => navigator.serviceWorker.ready);
	const first = page.getByTestId('site-card').first();
	const sitePath = (await first.getAttribute('href'))!;
	const name = (await first.locator('span.text-lg').first().innerText()).trim();
	await page.goto(sitePath);
	await expect(page.getByRole('heading', { name, exact: true })).toBeVisible();
	// Kept as it was opened: nothing was taken offline on this phone.
	await expect
		.poll(() =>
			page.evaluate(async (path) => {
				const names = (await indexedDB.databases()).map((d) => d.name ?? '');
				const name = names.find((n) => /^packledger-offline-u\d+$/.test(n));
				if (!name) return false;
				const open = indexedDB.open(name);
				const db: IDBDatabase = await new Promise((r) => (open.onsuccess = () => r(open.result)));
				return await new Promise<boolean>((r) => {
					const q = db.transaction('pages').objectStore('pages').get(path);
					q.onsuccess = () => r(!!q.result);
				});
			}, sitePath)
		)
		.toBe(true);

	await ctx.setOffline(true);
	await page.goto(sitePath);
	await expect(page).toHaveURL(new RegExp(`/offline${sitePath}$`));
	await expect(page.getByRole('heading', { name, exact: true })).toBeVisible();
	await page.goto('/sites/999999');
	await expect(page.getByRole('heading', { name: 'Not on this phone' })).toBeVisible();
	await page.screenshot({ path: 'test-results/offline-not-kept.png', fullPage: true });
	await ctx.close();
});
