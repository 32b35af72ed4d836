import { describe, expect, it } from 'vitest';
import {
	Gs1Error,
	buildDigitalLink,
	encodeDigitalLinkSegment,
	gs1CheckDigit,
	isValidGs1Serial,
	isValidGtin,
	parseDigitalLink,
	toGtin14
} from '../../src/lib/domain/gs1';

// GS1 character set 82 as listed in the GS1 General Specifications (docs/references.md §1).
const CSET82 =
	'!"%&\'()*+,-./' +
	'0123456789' +
	':;<=>?' +
	'ABCDEFGHIJKLMNOPQRSTUVWXYZ' +
	'_' +
	'abcdefghijklmnopqrstuvwxyz';

describe('GS1 check digit (GS1 General Specifications)', () => {
	it("GS1's own check-digit example: 629104150021 → 3", () => {
		expect(gs1CheckDigit('629104150021')).toBe(3);
		expect(isValidGtin('6291041500213')).toBe(true);
	});

	it("GS1's example GTIN: 0952123454321 → 3, i.e. 09521234543213", () => {
		expect(gs1CheckDigit('0952123454321')).toBe(3);
		expect(isValidGtin('09521234543213')).toBe(true);
	});

	it('GTIN-8 and GTIN-12 examples worked by hand from the formula [calc]', () => {
		// 9638507: from the right 7·3 + 0·1 + 5·3 + 8·1 + 3·3 + 6·1 + 9·3 = 86 → (10 − 6) mod 10 = 4
		expect(gs1CheckDigit('9638507')).toBe(4);
		expect(isValidGtin('96385074')).toBe(true);
		// 03600029145: 5·3 + 4 + 1·3 + 9 + 2·3 + 0 + 0 + 0 + 6·3 + 3 + 0·3 = 58 → 2
		expect(gs1CheckDigit('03600029145')).toBe(2);
		expect(isValidGtin('036000291452')).toBe(true);
	});

	it('weights from the right, so leading zeros never change the check digit', () => {
		expect(gs1CheckDigit('00629104150021')).toBe(gs1CheckDigit('629104150021'));
		expect(isValidGtin('00000096385074')).toBe(true);
	});

	it('rejects every wrong check digit of the GS1 example GTIN', () => {
		for (let d = 0; d <= 9; d++) {
			expect(isValidGtin(`0952123454321${d}`)).toBe(d === 3);
		}
	});

	it('rejects lengths other than 8, 12, 13, 14 and non-digits', () => {
		expect(isValidGtin('')).toBe(false);
		expect(isValidGtin('952123454321')).toBe(false); // 12 digits, check digit no longer fits
		expect(isValidGtin('009521234543213')).toBe(false); // 15 digits
		expect(isValidGtin('0952123454321X')).toBe(false);
		expect(isValidGtin(' 09521234543213')).toBe(false);
		expect(() => gs1CheckDigit('12a')).toThrow(Gs1Error);
	});
});

describe('toGtin14 (Digital Link canonical GTIN-14)', () => {
	it('left-pads GTIN-8/12/13 to 14 digits and keeps GTIN-14', () => {
		expect(toGtin14('9521234543213')).toBe('09521234543213');
		expect(toGtin14('036000291452')).toBe('00036000291452');
		expect(toGtin14('96385074')).toBe('00000096385074');
		expect(toGtin14('09521234543213')).toBe('09521234543213');
	});

	it('throws a Gs1Error that says what the check digit should be', () => {
		expect(() => toGtin14('09521234543214')).toThrow(Gs1Error);
		expect(() => toGtin14('09521234543214')).toThrow(/check digit should be 3/);
		expect(() => toGtin14('0952123454')).toThrow(/8, 12, 13 or 14/);
		expect(() => toGtin14('0952-1234543213')).toThrow(/digits only/);
	});
});

describe('AI 21 serial: GS1 character set 82, 1–20 characters (GS1 General Specifications)', () => {
	it('accepts exactly the 82 listed characters among printable ASCII', () => {
		expect(CSET82.length).toBe(82);
		for (let code = 0x20; code <= 0x7e; code++) {
			const ch = String.fromCharCode(code);
			expect(isValidGs1Serial(ch), `character ${JSON.stringify(ch)}`).toBe(CSET82.includes(ch));
		}
	});

	it('rejects space, #, @ and é (the examples of docs/references.md §1)', () => {
		for (const bad of ['AB 12', 'AB#12', 'AB@12', 'ABé12'])
			expect(isValidGs1Serial(bad)).toBe(false);
	});

	it('accepts 1 to 20 characters, rejects empty and 21', () => {
		expect(isValidGs1Serial('')).toBe(false);
		expect(isValidGs1Serial('A')).toBe(true);
		expect(isValidGs1Serial('A'.repeat(20))).toBe(true);
		expect(isValidGs1Serial('A'.repeat(21))).toBe(false);
	});
});

describe('Digital Link URI (GS1 Digital Link Standard: URI Syntax)', () => {
	it('percent-encodes AB/12+3 as AB%2F12%2B3', () => {
		expect(encodeDigitalLinkSegment('AB/12+3')).toBe('AB%2F12%2B3');
		expect(buildDigitalLink('https://id.example', '09521234543213', 'AB/12+3')).toBe(
			'https://id.example/01/09521234543213/21/AB%2F12%2B3'
		);
	});

	it('keeps only letters, digits, "-", "." and "_" literal; every other set-82 symbol becomes %XX', () => {
		for (const ch of CSET82) {
			const expected = /[A-Za-z0-9._-]/.test(ch)
				? ch
				: '%' + ch.charCodeAt(0).toString(16).toUpperCase().padStart(2, '0');
			expect(encodeDigitalLinkSegment(ch), `character ${ch}`).toBe(expected);
		}
	});

	it('builds with a GTIN-14 even from a GTIN-13, and ignores a trailing slash on the base', () => {
		expect(buildDigitalLink('https://id.example/', '9521234543213', '12345')).toBe(
			'https://id.example/01/09521234543213/21/12345'
		);
	});

	it('refuses to build with an invalid GTIN or serial', () => {
		expect(() => buildDigitalLink('https://id.example', '09521234543214', '1')).toThrow(Gs1Error);
		expect(() => buildDigitalLink('https://id.example', '09521234543213', 'AB 12')).toThrow(
			/character set 82/
		);
		expect(() => buildDigitalLink('https://id.example', '09521234543213', '')).toThrow(Gs1Error);
	});

	it('round trip: every set-82 character survives build → parse', () => {
		for (let i = 0; i < CSET82.length; i += 20) {
			const serial = CSET82.slice(i, i + 20);
			const url = buildDigitalLink('https://register.example/dl', '09521234543213', serial);
			expect(new URL(url).href).toBe(url); // already a well-formed URL
			expect(parseDigitalLink(url)).toEqual({ gtin: '09521234543213', serial });
		}
	});

	it('parses the batch-and-serial form and a brand path prefix (bwipp GS1 Digital Link examples)', () => {
		expect(parseDigitalLink('https://id.gs1.org/01/09521234543213/10/ABC123/21/12345')).toEqual({
			gtin: '09521234543213',
			serial: '12345'
		});
		expect(parseDigitalLink('https://example.com/products/01/09521234543213/21/12345')).toEqual({
			gtin: '09521234543213',
			serial: '12345'
		});
	});

	it('pads a GTIN-13 in the URI to 14 digits and ignores the query string (data attributes)', () => {
		expect(parseDigitalLink('https://id.example/01/9521234543213/21/X1?17=261231')).toEqual({
			gtin: '09521234543213',
			serial: 'X1'
		});
	});

	it('returns null for anything that is not a valid 01 + 21 Digital Link', () => {
		const notLinks = [
			'https://id.gs1.org/01/09521234543213', // no serial
			'https://id.gs1.org/01/09521234543214/21/1', // wrong check digit
			'https://id.gs1.org/01/0952123454321/21/1', // 13 digits, wrong check digit
			'https://id.gs1.org/01/09521234543213/21/1/extra',
			'https://id.gs1.org/01/09521234543213/21/' + 'A'.repeat(21),
			'https://id.gs1.org/01/09521234543213/21/AB%2312', // '#' is not in set 82
			'https://id.gs1.org/01/09521234543213/21/%E0%A4', // malformed UTF-8
			'https://id.gs1.org/00/106141411234567897',
			'ftp://id.gs1.org/01/09521234543213/21/1',
			'PL48-26-000123F',
			''
		];
		for (const url of notLinks) expect(parseDigitalLink(url), url).toBeNull();
	});
});
