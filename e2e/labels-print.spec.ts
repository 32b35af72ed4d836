import { test, expect } from './roles';
import { PNG } from 'pngjs';
import jsQR from 'jsqr';
import { iso7064Mod3736CheckChar } from '../src/lib/domain/serial';
import { stateFile } from './roles';

/**
 * Both label formats rendered in Chromium at print size (print media, 1 mm = 96/25.4 CSS px,
 * four device pixels per CSS pixel ≈ 384 dpi): the QR decodes with an independent decoder
 * (jsQR), keeps 4 modules of quiet zone on every side (ISO/IEC 18004), and the full serial
 * with its check character is neither clipped nor cut.
 */
for (const format of ['roll', 'a4'] as const) {
	test(`labels print whole: ${format === 'roll' ? '50 × 30 mm roll' : 'A4 3 × 8 sheet'}`, async ({
		browser
	}) => {
		const ctx = await browser.newContext({
			storageState: stateFile('workshop'),
			viewport: { width: 900, height: 1200 },
			deviceScaleFactor: 4
		});
		const page = await ctx.newPage();
		await page.goto('/allocations');
		await page.getByLabel('Model').selectOption({ label: 'TC-HC-48 — TC-HC 48 V module' });
		await page.getByLabel('How many').fill('3');
		await page.getByRole('button', { name: 'Reserve serials' }).click();
		await expect(page.getByRole('heading', { name: /Run #\d+: 3 × TC-HC-48/ })).toBeVisible();
		// The run page links the A4 sheet; the sheet page offers the roll format beside it.
		await page.getByRole('link', { name: /A4 sheet/ }).click();
		if (format === 'roll') await page.getByRole('link', { name: /Roll 50 × 30 mm/ }).click();
		await page.emulateMedia({ media: 'print' });
		const labels = page.getByTestId('label-sheet').locator('.module-label');
		await expect(labels).toHaveCount(3);
		await page.evaluate(() => document.fonts.ready);

		const first = labels.first();
		const box = (await first.boundingBox())!;
		// 96 CSS px per inch: 50 × 30 mm = 188.98 × 113.39 px; 70 × 37 mm = 264.57 × 139.84 px.
		const [wMm, hMm] = format === 'roll' ? [50, 30] : [70, 37];
		expect(box.width).toBeCloseTo((wMm * 96) / 25.4, 0);
		expect(box.height).toBeCloseTo((hMm * 96) / 25.4, 0);

		// The serial: full text with a valid ISO 7064 check character, not clipped by its box or the label.
		const serial = (await first.getAttribute('data-serial'))!;
		const body = serial.slice(0, -1);
		expect(serial.at(-1)).toBe(iso7064Mod3736CheckChar(body.replace(/-/g, '')));
		const fit = await first.locator('.serial').evaluate((el) => {
			const r = el.getBoundingClientRect();
			const l = el.closest('.module-label')!.getBoundingClientRect();
			const range = document.createRange();
			range.selectNodeContents(el);
			const t = range.getBoundingClientRect();
			return {
				text: el.textContent?.trim(),
				scrollWidth: el.scrollWidth,
				clientWidth: el.clientWidth,
				textRight: t.right,
				textBottom: t.bottom,
				labelRight: l.right,
				labelBottom: l.bottom,
				heightPx: r.height,
				fontPx: parseFloat(getComputedStyle(el).fontSize)
			};
		});
		expect(fit.text).toBe(serial);
		expect(fit.scrollWidth).toBeLessThanOrEqual(fit.clientWidth);
		expect(fit.textRight).toBeLessThanOrEqual(fit.labelRight);
		expect(fit.textBottom).toBeLessThanOrEqual(fit.labelBottom + 0.5);
		// Read at arm's length: at least 10 pt (13.3 CSS px) type.
		expect(fit.fontPx).toBeGreaterThanOrEqual(13.3);

		// The QR from the rendered image, decoded by jsQR.
		const png = PNG.sync.read(await first.screenshot({ animations: 'disabled' }));
		const code = jsQR(new Uint8ClampedArray(png.data), png.width, png.height);
		expect(code, 'the QR code decodes from the rendered label').not.toBeNull();
		expect(code!.data).toBe(await first.getAttribute('data-payload'));
		expect(code!.data.endsWith(`/21/${serial}`)).toBe(true);

		// Quiet zone: 4 modules of light around the symbol, all inside the label.
		const dim = 17 + 4 * code!.version;
		const loc = code!.location;
		const module = (loc.topRightCorner.x - loc.topLeftCorner.x) / dim;
		const left = loc.topLeftCorner.x;
		const top = loc.topLeftCorner.y;
		const right = loc.bottomRightCorner.x;
		const bottom = loc.bottomRightCorner.y;
		const quiet = 4 * module;
		expect(left - quiet).toBeGreaterThanOrEqual(-1);
		expect(top - quiet).toBeGreaterThanOrEqual(-1);
		const lum = (x: number, y: number) => {
			const i = (Math.round(y) * png.width + Math.round(x)) * 4;
			return 0.2126 * png.data[i] + 0.7152 * png.data[i + 1] + 0.0722 * png.data[i + 2];
		};
		let dark = 0;
		for (let y = Math.max(0, top - quiet); y < bottom + quiet && y < png.height; y++)
			for (let x = Math.max(0, left - quiet); x < right + quiet && x < png.width; x++) {
				const inSymbol = x >= left - 1 && x <= right + 1 && y >= top - 1 && y <= bottom + 1;
				if (!inSymbol && lum(x, y) < 128) dark++;
			}
		expect(dark, 'dark pixels inside the 4-module quiet zone').toBe(0);
		expect(right + quiet).toBeLessThanOrEqual(png.width + 1);
		expect(bottom + quiet).toBeLessThanOrEqual(png.height + 1);

		await first.screenshot({ path: `test-results/label-${format}-print.png` });
		await ctx.close();
	});
}
