import type { Page } from '@playwright/test';
import { PNG } from 'pngjs';
import { sign } from './signature';

/** The yes/no questions of every checklist, by their legends. */
export const CHECKS = [
	'Polarity of every connection checked?',
	'Every terminal torqued to the maker’s value?',
	'Stop-charge signal proven to reach the inverter?'
];
/** The question a system of more than one string adds. */
export const STRING_DEVICE_CHECK = 'Does each string have its own overcurrent device?';

/** An 8 × 8 PNG of one grey shade: a photo to attach that any image reader accepts. */
export function plainPng(shade = 200): Buffer {
	const png = new PNG({ width: 8, height: 8 });
	png.data.fill(shade);
	return PNG.sync.write(png);
}

/** A checklist input by its form name (`moduleOcvV.1.1`, `insulationMohm` …). */
export const field = (page: Page, name: string) => page.locator(`[name="${name}"]`);

/** Types each value into the input of that form name, in the order given. */
export async function fillFields(page: Page, values: Record<string, string>) {
	for (const [name, value] of Object.entries(values)) await field(page, name).fill(value);
}

/** Answers Yes to each question, found by its group's legend. */
export async function answerYes(page: Page, legends: string[]) {
	for (const legend of legends)
		await page.getByRole('group', { name: legend }).getByText('Yes', { exact: true }).click();
}

/** The sign-off: the technician's name and licence, who took the handover, and both signatures. */
export async function signOff(
	page: Page,
	who: { technicianName: string; licenceNumber: string; handoverName: string },
	beforeSigning?: () => Promise<void>
) {
	await fillFields(page, who);
	await beforeSigning?.();
	await sign(page, 'sig-technicianSignature');
	await sign(page, 'sig-ownerSignature');
}
