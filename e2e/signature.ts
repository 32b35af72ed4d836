import { expect, type Page } from '@playwright/test';

/** Draws a signature-like zigzag on a signature pad with the mouse (signature_pad listens to pointer events). */
export async function sign(page: Page, testId: string) {
	const pad = page.getByTestId(testId);
	await pad.scrollIntoViewIfNeeded();
	// signature_pad is fetched as the box nears the screen: draw once it listens.
	await expect(pad).toHaveAttribute('data-ready', 'yes');
	const b = (await pad.boundingBox())!;
	await page.mouse.move(b.x + 20, b.y + b.height / 2);
	await page.mouse.down();
	for (let i = 1; i <= 14; i++)
		await page.mouse.move(b.x + 20 + i * 20, b.y + b.height / 2 + (i % 2 ? -30 : 30), { steps: 3 });
	await page.mouse.up();
}
