/**
 * The label's QR code must decode to exactly the payload we meant to print. The code is
 * made with `qrcode` and read back with `jsqr` (+ `pngjs`), an independent decoder, so a
 * bug in one library cannot hide itself.
 */
import { describe, expect, it } from 'vitest';
import QRCode from 'qrcode';
import jsQR from 'jsqr';
import { PNG } from 'pngjs';
import { qrPayloadFor } from '../../src/lib/domain/label';
import { parseDigitalLink } from '../../src/lib/domain/gs1';
import { extractSerialFromScan, formatSerial } from '../../src/lib/domain/serial';

async function roundTrip(payload: string): Promise<string | undefined> {
	const png = await QRCode.toBuffer(payload, {
		type: 'png',
		errorCorrectionLevel: 'M',
		margin: 4,
		scale: 6
	});
	const image = PNG.sync.read(png);
	return jsQR(new Uint8ClampedArray(image.data), image.width, image.height)?.data;
}

const BASE = 'https://register.tidewater.example';
// GS1's example GTIN (docs/references.md §1), not a real product.
const GS1_EXAMPLE_GTIN = '09521234543213';
const serial = formatSerial({ variant: '48', year: 2026, number: 123 });

describe('label QR code round trip (qrcode → PNG → jsqr)', () => {
	it('a model with a GTIN: the GS1 Digital Link comes back unchanged', async () => {
		const payload = qrPayloadFor({ baseUrl: BASE + '/', gtin: GS1_EXAMPLE_GTIN, serial });
		expect(payload).toBe(`${BASE}/01/09521234543213/21/PL48-26-000123F`);
		expect(await roundTrip(payload)).toBe(payload);
		expect(extractSerialFromScan(payload, BASE)).toEqual({
			kind: 'digital-link',
			gtin: GS1_EXAMPLE_GTIN,
			serial
		});
	});

	it('a model without a GTIN: the module page URL comes back unchanged', async () => {
		for (const gtin of [null, undefined, '']) {
			const payload = qrPayloadFor({ baseUrl: BASE, gtin, serial });
			expect(payload).toBe(`${BASE}/m/PL48-26-000123F`);
			expect(await roundTrip(payload)).toBe(payload);
			expect(extractSerialFromScan(payload, BASE)).toEqual({ kind: 'serial', serial });
		}
	});

	it('a serial that needs percent-encoding survives in both forms', async () => {
		const odd = 'AB/12+3';
		const link = qrPayloadFor({ baseUrl: BASE, gtin: GS1_EXAMPLE_GTIN, serial: odd });
		expect(link).toBe(`${BASE}/01/09521234543213/21/AB%2F12%2B3`);
		const decodedLink = await roundTrip(link);
		expect(decodedLink).toBe(link);
		expect(parseDigitalLink(decodedLink!)).toEqual({ gtin: GS1_EXAMPLE_GTIN, serial: odd });

		const page = qrPayloadFor({ baseUrl: BASE, gtin: null, serial: odd });
		expect(page).toBe(`${BASE}/m/AB%2F12%2B3`);
		expect(await roundTrip(page)).toBe(page);
	});

	it('a GTIN-13 is written as GTIN-14 in the code', async () => {
		const payload = qrPayloadFor({ baseUrl: BASE, gtin: '9521234543213', serial });
		expect(payload).toContain('/01/09521234543213/');
		expect(await roundTrip(payload)).toBe(payload);
	});
});
