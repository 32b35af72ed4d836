import type { Browser, Page } from '@playwright/test';
import { stateFile } from './roles';

/** What the site form asks (the kind is the label of its choice, e.g. 'Telecom or radio hut'). */
export interface SiteInput {
	name: string;
	kind: string;
	owner: string;
	contact: string;
	address: string;
}

/** Fills the new-site form (`/sites/new`); the caller saves it. */
export async function fillSite(page: Page, s: SiteInput) {
	await page.getByLabel('Site name').fill(s.name);
	await page.getByText(s.kind).click();
	await page.getByLabel('Owner’s name').fill(s.owner);
	await page.getByLabel('Phone or e-mail').fill(s.contact);
	await page.getByLabel('Address').fill(s.address);
}

/** What the system form asks: the design (modules per string × strings) and the inverter's DC window. */
export interface SystemInput {
	name: string;
	model: string;
	series: number;
	parallel: number;
	inverter: string;
	minV: number;
	maxV: number;
}

/** Fills the new-system form of a site; the caller saves it. */
export async function fillSystem(page: Page, s: SystemInput) {
	await page.getByLabel('Name', { exact: true }).fill(s.name);
	await page.getByLabel('Module model').selectOption(s.model);
	await page.getByLabel(/Modules per string/).fill(String(s.series));
	await page.getByLabel(/Strings in parallel/).fill(String(s.parallel));
	await page.getByLabel('Inverter make and model').fill(s.inverter);
	await page.getByLabel(/Battery DC minimum/).fill(String(s.minV));
	await page.getByLabel(/Battery DC maximum/).fill(String(s.maxV));
}

/** A phone-sized context (390 × 844, touch) signed in as the Ridgeline field technician. */
export const phoneAsTech = (browser: Browser) =>
	browser.newContext({
		storageState: stateFile('ridgelineTech'),
		viewport: { width: 390, height: 844 },
		isMobile: true,
		hasTouch: true
	});

/** The first `n` shipped TC-HC-48 serials by serial, read through the modules API. */
export async function shippedSerials(page: Page, n: number): Promise<string[]> {
	const res = await page.request.get(
		'/api/modules?model=TC-HC-48&state=shipped&sort=serial&dir=asc&pageSize=10'
	);
	const units = (await res.json()) as { items: { serial: string }[] };
	return units.items.slice(0, n).map((i) => i.serial);
}
