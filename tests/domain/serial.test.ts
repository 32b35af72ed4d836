import { describe, expect, it } from 'vitest';
import { isValidGs1Serial, buildDigitalLink } from '../../src/lib/domain/gs1';
import {
	SERIAL_EXAMPLE,
	SerialError,
	extractSerialFromScan,
	formatSerial,
	iso7064Mod3736CheckChar,
	parseSerial,
	serialRun
} from '../../src/lib/domain/serial';

const ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ';

/**
 * An independent restatement of ISO/IEC 7064 MOD 37,36, written the way python-stdnum
 * writes it (stdnum/iso7064/mod_37_36.py: running checksum starting at M/2, valid when 1),
 * so the module is not checked against itself.
 */
function stdnumChecksum(s: string): number {
	const m = 36;
	let check = m / 2;
	for (const ch of s) check = ((((check || m) * 2) % (m + 1)) + ALPHABET.indexOf(ch)) % m;
	return check;
}

/** Letters and digits of a serial with its check character, as the check sees them. */
const checkedText = (serial: string) => serial.replace(/-/g, '');
const isCheckValid = (s: string) => iso7064Mod3736CheckChar(s.slice(0, -1)) === s.at(-1);

const SAMPLE = [
	...serialRun('48', 2026, 1, 40),
	...serialRun('12', 2025, 999_960, 40),
	formatSerial({ variant: 'ZZZZ', year: 2099, number: 999_999 }),
	formatSerial({ variant: 'A', year: 2000, number: 1 }),
	formatSerial({ variant: '24HV', year: 2031, number: 505_050 })
];

describe('ISO/IEC 7064 MOD 37,36 check character', () => {
	it("python-stdnum's doctest example (a GRid): A12425GABC1234002 → M", () => {
		expect(iso7064Mod3736CheckChar('A12425GABC1234002')).toBe('M');
	});

	it('agrees with the python-stdnum formulation: appending the check character gives checksum 1', () => {
		for (const serial of SAMPLE) {
			expect(stdnumChecksum(checkedText(serial)), serial).toBe(1);
		}
		// and on strings that are not serials
		for (const s of ['0', 'Z', '00000000', 'ZZZZZZZZ', 'HELLO123', 'A1B2C3D4E5F6G7H8']) {
			expect(stdnumChecksum(s + iso7064Mod3736CheckChar(s)), s).toBe(1);
		}
	});

	it('detects every single-character substitution in a sample of serials (exhaustive per serial)', () => {
		for (const serial of SAMPLE) {
			const s = checkedText(serial);
			for (let i = 0; i < s.length; i++) {
				for (const ch of ALPHABET) {
					if (ch === s[i]) continue;
					const mutated = s.slice(0, i) + ch + s.slice(i + 1);
					expect(isCheckValid(mutated), `${s} → ${mutated}`).toBe(false);
				}
			}
		}
	});

	it('detects every adjacent transposition in a fixed sample that avoids its blind spots (regression guard)', () => {
		// The sample avoids the blind spots shown below; this guards against a regression
		// that would lose transposition detection altogether.
		for (const serial of SAMPLE) {
			const s = checkedText(serial);
			for (let i = 0; i + 1 < s.length; i++) {
				if (s[i] === s[i + 1]) continue;
				const swapped = s.slice(0, i) + s[i + 1] + s[i] + s.slice(i + 2);
				expect(isCheckValid(swapped), `${s} → ${swapped}`).toBe(false);
			}
		}
	});

	it('does NOT catch every adjacent transposition: 000123 ↔ 001023 share check F (hybrid-system limit)', () => {
		expect(iso7064Mod3736CheckChar('PL4826000123')).toBe('F');
		expect(iso7064Mod3736CheckChar('PL4826001023')).toBe('F');
		expect(parseSerial('PL48-26-001023F')).toMatchObject({ ok: true, number: 1023 });
	});

	it('misses well under 1 % of adjacent transpositions over 20 000 serials [calc, measured]', () => {
		let swaps = 0;
		let missed = 0;
		for (let n = 1; n <= 999_999; n += 50) {
			const s = checkedText(formatSerial({ variant: '48', year: 2026, number: n }));
			for (let i = 0; i + 1 < s.length; i++) {
				if (s[i] === s[i + 1]) continue;
				swaps++;
				if (isCheckValid(s.slice(0, i) + s[i + 1] + s[i] + s.slice(i + 2))) missed++;
			}
		}
		expect(swaps).toBeGreaterThan(100_000);
		expect(missed / swaps).toBeGreaterThan(0);
		expect(missed / swaps).toBeLessThan(0.01);
	});

	it('refuses characters outside 0-9 A-Z', () => {
		expect(() => iso7064Mod3736CheckChar('pl48')).toThrow(SerialError);
		expect(() => iso7064Mod3736CheckChar('PL-48')).toThrow(SerialError);
	});
});

describe('formatSerial', () => {
	it('writes PL{variant}-{YY}-{NNNNNN}{check}', () => {
		expect(formatSerial({ variant: '48', year: 2026, number: 123 })).toBe('PL48-26-000123F');
		expect(SERIAL_EXAMPLE).toBe('PL48-26-000123F');
		expect(formatSerial({ variant: '12', year: 2009, number: 999_999 })).toMatch(
			/^PL12-09-999999[0-9A-Z]$/
		);
		expect(formatSerial({ variant: 'A', year: 2000, number: 1 })).toMatch(
			/^PLA-00-000001[0-9A-Z]$/
		);
	});

	it('refuses parts that cannot make a serial, with a message', () => {
		const bad = [
			{ variant: '', year: 2026, number: 1 },
			{ variant: '48v', year: 2026, number: 1 },
			{ variant: 'ABCDE', year: 2026, number: 1 },
			{ variant: '4-8', year: 2026, number: 1 },
			{ variant: '48', year: 1999, number: 1 },
			{ variant: '48', year: 2100, number: 1 },
			{ variant: '48', year: 26, number: 1 },
			{ variant: '48', year: 2026, number: 0 },
			{ variant: '48', year: 2026, number: 1_000_000 },
			{ variant: '48', year: 2026, number: 1.5 }
		];
		for (const parts of bad)
			expect(() => formatSerial(parts), JSON.stringify(parts)).toThrow(SerialError);
	});
});

describe('serialRun', () => {
	it('gives consecutive serials', () => {
		const run = serialRun('48', 2026, 122, 3);
		expect(run.map((s) => parseSerial(s))).toEqual([
			{ ok: true, serial: run[0], variant: '48', year2: 26, number: 122 },
			{ ok: true, serial: run[1], variant: '48', year2: 26, number: 123 },
			{ ok: true, serial: run[2], variant: '48', year2: 26, number: 124 }
		]);
		expect(run[1]).toBe('PL48-26-000123F');
	});

	it('allows an empty run and a run that ends exactly at 999999', () => {
		expect(serialRun('48', 2026, 1, 0)).toEqual([]);
		expect(serialRun('48', 2026, 999_998, 2)).toHaveLength(2);
	});

	it('refuses a run past 999999 or a bad count', () => {
		expect(() => serialRun('48', 2026, 999_999, 2)).toThrow(/999999/);
		expect(() => serialRun('48', 2026, 1, -1)).toThrow(SerialError);
		expect(() => serialRun('48', 2026, 1, 2.5)).toThrow(SerialError);
	});
});

describe('parseSerial', () => {
	it('reads a serial in any case, with surrounding whitespace or without hyphens', () => {
		const expected = { ok: true, serial: 'PL48-26-000123F', variant: '48', year2: 26, number: 123 };
		for (const typed of [
			'PL48-26-000123F',
			'  pl48-26-000123f\n',
			'PL4826000123F',
			'pl48-26000123f'
		]) {
			expect(parseSerial(typed), typed).toEqual(expected);
		}
	});

	it('tells a mistyped serial from something that is not a serial', () => {
		expect(parseSerial('PL48-26-000124F')).toEqual({
			ok: false,
			reason: 'check character does not match — probably mistyped'
		});
		expect(parseSerial('PL48-26-000132F')).toMatchObject({
			ok: false,
			reason: /probably mistyped/
		});
		expect(parseSerial('PL84-26-000123F')).toMatchObject({
			ok: false,
			reason: /probably mistyped/
		});
		for (const text of [
			'hello',
			'PL48-26-00123F',
			'PL48-26-0001234F',
			'XX48-26-000123F',
			'PL48-26-000123'
		]) {
			expect(parseSerial(text), text).toMatchObject({
				ok: false,
				reason: /^not a Packledger serial/
			});
		}
		expect(parseSerial('   ')).toMatchObject({ ok: false, reason: /nothing entered/ });
	});

	it('refuses running number 000000 even with a matching check character', () => {
		const body = 'PL4826000000';
		const text = `PL48-26-000000${iso7064Mod3736CheckChar(body)}`;
		expect(parseSerial(text)).toMatchObject({ ok: false, reason: /000000/ });
	});

	it('catches every single substitution in the printed serial', () => {
		for (const serial of SAMPLE) {
			for (let i = 0; i < serial.length; i++) {
				if (serial[i] === '-') continue;
				for (const ch of ALPHABET) {
					if (ch === serial[i]) continue;
					const typo = serial.slice(0, i) + ch + serial.slice(i + 1);
					expect(parseSerial(typo).ok, typo).toBe(false);
				}
			}
		}
	});

	it('never reads a hyphen swapped with a neighbour as a different serial', () => {
		for (const serial of SAMPLE) {
			for (let i = 0; i + 1 < serial.length; i++) {
				if (serial[i] !== '-' && serial[i + 1] !== '-') continue;
				const swapped = serial.slice(0, i) + serial[i + 1] + serial[i] + serial.slice(i + 2);
				const parsed = parseSerial(swapped);
				if (parsed.ok) expect(parsed.serial, swapped).toBe(serial);
			}
		}
	});
});

describe('serials as GS1 AI 21 serials (GS1 character set 82, ≤ 20 characters)', () => {
	it('every serial in the sample, including the longest possible, is a valid AI 21 serial', () => {
		for (const serial of SAMPLE) {
			expect(serial.length).toBeLessThanOrEqual(17);
			expect(isValidGs1Serial(serial), serial).toBe(true);
		}
	});

	it('needs no percent-encoding in a Digital Link', () => {
		for (const serial of SAMPLE) {
			expect(
				buildDigitalLink('https://r.example', '09521234543213', serial).endsWith(`/21/${serial}`)
			).toBe(true);
		}
	});
});

describe('extractSerialFromScan', () => {
	const base = 'https://register.tidewater.example/pl';

	it('reads a bare serial', () => {
		expect(extractSerialFromScan(' pl48-26-000123f ')).toEqual({
			kind: 'serial',
			serial: 'PL48-26-000123F'
		});
	});

	it('reads the module page URL, on any host without a base and under the base with one', () => {
		expect(extractSerialFromScan('https://any.example/m/PL48-26-000123F')).toEqual({
			kind: 'serial',
			serial: 'PL48-26-000123F'
		});
		expect(extractSerialFromScan(`${base}/m/PL48-26-000123F`, base)).toEqual({
			kind: 'serial',
			serial: 'PL48-26-000123F'
		});
		expect(extractSerialFromScan(`${base}/m/PL48-26-000123F/`, base + '/')).toMatchObject({
			kind: 'serial'
		});
	});

	it('reads a GS1 Digital Link and returns the GTIN-14', () => {
		expect(extractSerialFromScan(`${base}/01/09521234543213/21/PL48-26-000123F`, base)).toEqual({
			kind: 'digital-link',
			gtin: '09521234543213',
			serial: 'PL48-26-000123F'
		});
		expect(extractSerialFromScan('https://id.gs1.org/01/9521234543213/21/PL48-26-000123F')).toEqual(
			{
				kind: 'digital-link',
				gtin: '09521234543213',
				serial: 'PL48-26-000123F'
			}
		);
	});

	it('turns away URLs on another host or outside the base path when a base is given', () => {
		const elsewhere = extractSerialFromScan('https://other.example/m/PL48-26-000123F', base);
		expect(elsewhere).toMatchObject({ kind: 'unknown', reason: /^not a Packledger label/ });
		expect(
			extractSerialFromScan('https://register.tidewater.example/m/PL48-26-000123F', base)
		).toMatchObject({
			kind: 'unknown'
		});
		expect(
			extractSerialFromScan('https://register.tidewater.example/plx/m/PL48-26-000123F', base)
		).toMatchObject({
			kind: 'unknown'
		});
	});

	it('explains a mistyped serial and turns away everything else as not a Packledger label', () => {
		expect(extractSerialFromScan('PL48-26-000124F')).toEqual({
			kind: 'unknown',
			reason: 'check character does not match — probably mistyped'
		});
		const others = [
			'hello world',
			'09521234543213',
			'https://id.gs1.org/01/09521234543213/21/ABC123', // a GS1 serial, not ours
			'https://any.example/m/ABC123',
			'https://any.example/modules/PL48-26-000123F',
			'mailto:someone@example.com'
		];
		for (const scan of others) {
			expect(extractSerialFromScan(scan), scan).toMatchObject({
				kind: 'unknown',
				reason: /^not a Packledger label/
			});
		}
		expect(extractSerialFromScan('')).toMatchObject({ kind: 'unknown' });
	});
});
