/**
 * Packledger's own module serial: `PL{variant}-{YY}-{NNNNNN}{C}`, e.g. `PL48-26-000123F`.
 *
 * - `PL` marks the text as ours, so a scan of somebody else's code is turned away early.
 * - `variant` is the model's voltage variant (1–4 of 0-9 A-Z), so a fitter can tell a
 *   12 V module from a 48 V one without looking it up.
 * - `YY` is the build year, 2000–2099 only, so two digits always mean one year.
 * - `NNNNNN` is the running number within variant and year (1–999 999), zero-padded so
 *   serials sort and line up on paper.
 * - `C` is an ISO/IEC 7064 MOD 37,36 check character over all letters and digits before
 *   it (hyphens are layout only). It is a single 0-9/A-Z character, so unlike MOD 37-2 it
 *   never needs `*`, which is awkward in URLs and on labels. It catches every single
 *   mistyped character and most, not all, swapped neighbours (see below).
 *
 * At most 17 characters, all in GS1 character set 82, so every serial is also a valid
 * GS1 AI 21 serial and can go in a GS1 Digital Link unchanged.
 */
import { parseDigitalLink } from './gs1';

/** Thrown when a serial cannot be made from the given parts; the message is for people. */
export class SerialError extends Error {
	override readonly name = 'SerialError';
}

const ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ';

/**
 * ISO/IEC 7064 hybrid system MOD 37,36 (M = 36): P₁ = M; for each character value a:
 * S = (P + a) mod M, read as M when 0; P = 2S mod (M + 1). The check character c makes
 * (P + c) mod M = 1, so c = (M + 1 − P) mod M. Input: 0-9 and upper-case A-Z.
 * Cross-checked against python-stdnum's stdnum.iso7064.mod_37_36 (see the tests).
 *
 * What it catches: every single substitution (each step is a bijection of P, so a changed
 * character always changes the final P). It does NOT catch every adjacent transposition:
 * when P + a or P + b wraps past M the two orders can meet again, e.g. PL48-26-000123F
 * and PL48-26-001023F share "F". Measured over random serials, about 0.25 % of adjacent
 * transpositions pass unnoticed; the tests pin this down.
 */
export function iso7064Mod3736CheckChar(s: string): string {
	const M = 36;
	let p = M;
	for (const ch of s) {
		const a = ALPHABET.indexOf(ch);
		if (a < 0) {
			throw new SerialError(
				`"${ch}" cannot be checked with ISO/IEC 7064 MOD 37,36; only 0-9 and A-Z can.`
			);
		}
		const sum = (p + a) % M || M;
		p = (2 * sum) % (M + 1);
	}
	return ALPHABET[(M + 1 - p) % M];
}

/** A real serial (variant 48, 2026, number 123), for hints in messages and forms. */
export const SERIAL_EXAMPLE = 'PL48-26-000123F';
const MAX_NUMBER = 999_999;

export interface SerialParts {
	/** Voltage variant of the model, 1–4 of 0-9 A-Z, e.g. "48". */
	variant: string;
	/** Full build year, 2000–2099. */
	year: number;
	/** Running number, 1–999 999. */
	number: number;
}

function checkParts({ variant, year, number }: SerialParts): void {
	if (!/^[0-9A-Z]{1,4}$/.test(variant)) {
		throw new SerialError(
			`Variant "${variant}" must be 1–4 upper-case letters or digits, e.g. "48".`
		);
	}
	if (!Number.isInteger(year) || year < 2000 || year > 2099) {
		throw new SerialError(
			`Build year ${year} must be a whole year from 2000 to 2099 (serials carry only its last two digits).`
		);
	}
	if (!Number.isInteger(number) || number < 1 || number > MAX_NUMBER) {
		throw new SerialError(`Running number ${number} must be a whole number from 1 to 999999.`);
	}
}

function assemble(variant: string, year2: string, digits: string): string {
	const check = iso7064Mod3736CheckChar(`PL${variant}${year2}${digits}`);
	return `PL${variant}-${year2}-${digits}${check}`;
}

/** The serial for one module. Throws SerialError for parts that cannot make a serial. */
export function formatSerial(parts: SerialParts): string {
	checkParts(parts);
	const year2 = String(parts.year % 100).padStart(2, '0');
	return assemble(parts.variant, year2, String(parts.number).padStart(6, '0'));
}

/** Consecutive serials from firstNumber, for printing a batch of labels. */
export function serialRun(
	variant: string,
	year: number,
	firstNumber: number,
	count: number
): string[] {
	if (!Number.isInteger(count) || count < 0) {
		throw new SerialError(`A run needs a whole, non-negative count of serials, not ${count}.`);
	}
	if (count === 0) return [];
	checkParts({ variant, year, number: firstNumber });
	const last = firstNumber + count - 1;
	if (last > MAX_NUMBER) {
		throw new SerialError(
			`A run of ${count} from ${firstNumber} would end at ${last}; running numbers stop at 999999.`
		);
	}
	return Array.from({ length: count }, (_, i) =>
		formatSerial({ variant, year, number: firstNumber + i })
	);
}

export type ParsedSerial =
	| { ok: true; serial: string; variant: string; year2: number; number: number }
	| { ok: false; reason: string };

const NOT_OURS = `not a Packledger serial (they look like ${SERIAL_EXAMPLE})`;

/**
 * Reads a typed or scanned serial. Case and surrounding whitespace are ignored, and so
 * are missing hyphens: the variant's length follows from the fixed length of the rest,
 * and the check character still guards the whole. Returns the canonical form.
 */
export function parseSerial(text: string): ParsedSerial {
	const t = text.trim().toUpperCase();
	if (t === '') return { ok: false, reason: 'nothing entered — type or scan a serial' };
	const m = /^PL([0-9A-Z]{1,4})-?(\d{2})-?(\d{6})([0-9A-Z])$/.exec(t);
	if (!m) return { ok: false, reason: NOT_OURS };
	const [, variant, year2, digits, check] = m;
	if (iso7064Mod3736CheckChar(`PL${variant}${year2}${digits}`) !== check) {
		return { ok: false, reason: 'check character does not match — probably mistyped' };
	}
	const number = Number(digits);
	if (number === 0) return { ok: false, reason: 'running number 000000 is never issued' };
	return {
		ok: true,
		serial: assemble(variant, year2, digits),
		variant,
		year2: Number(year2),
		number
	};
}

export type ScanResult =
	| { kind: 'serial'; serial: string }
	| { kind: 'digital-link'; gtin: string; serial: string }
	| { kind: 'unknown'; reason: string };

const NOT_A_LABEL = 'not a Packledger label';

function decodeOrNull(segment: string): string | null {
	try {
		return decodeURIComponent(segment);
	} catch {
		return null;
	}
}

/**
 * What a scanned (or pasted) code refers to: a bare serial, our own module URL
 * `{base}/m/{serial}`, or a GS1 Digital Link `{base}/01/{gtin}/21/{serial}`. With
 * baseUrl, a URL must sit on the same host and under the same path (the scheme is not
 * compared, so an http:// scan of an https:// label still reads); without it any host
 * is accepted. The serial inside a URL must be a valid Packledger serial.
 */
export function extractSerialFromScan(scanText: string, baseUrl?: string): ScanResult {
	const text = scanText.trim();
	if (text === '') return { kind: 'unknown', reason: 'the scan was empty' };

	if (!/^https?:\/\//i.test(text)) {
		const bare = parseSerial(text);
		if (bare.ok) return { kind: 'serial', serial: bare.serial };
		// A text that starts like ours deserves the precise reason (e.g. a typo).
		return { kind: 'unknown', reason: /^PL/i.test(text) ? bare.reason : NOT_A_LABEL };
	}

	let url: URL;
	try {
		url = new URL(text);
	} catch {
		return { kind: 'unknown', reason: NOT_A_LABEL };
	}

	let path = url.pathname;
	if (baseUrl !== undefined) {
		let base: URL;
		try {
			base = new URL(baseUrl);
		} catch {
			throw new SerialError(`Base URL "${baseUrl}" is not an absolute URL.`);
		}
		const basePath = base.pathname.replace(/\/+$/, '');
		if (url.host !== base.host || !(path === basePath || path.startsWith(basePath + '/'))) {
			return {
				kind: 'unknown',
				reason: `${NOT_A_LABEL} (it points to ${url.host}${url.pathname})`
			};
		}
		path = path.slice(basePath.length);
	}

	const link = parseDigitalLink(text);
	if (link) {
		const p = parseSerial(link.serial);
		if (!p.ok)
			return { kind: 'unknown', reason: `${NOT_A_LABEL} (serial "${link.serial}": ${p.reason})` };
		return { kind: 'digital-link', gtin: link.gtin, serial: p.serial };
	}

	// Without a base the module page may sit under any prefix; with one it must follow it directly.
	const m = (baseUrl !== undefined ? /^\/m\/([^/]+)\/?$/ : /\/m\/([^/]+)\/?$/).exec(path);
	if (m) {
		const decoded = decodeOrNull(m[1]);
		if (decoded === null) return { kind: 'unknown', reason: NOT_A_LABEL };
		const p = parseSerial(decoded);
		if (!p.ok)
			return { kind: 'unknown', reason: `${NOT_A_LABEL} (serial "${decoded}": ${p.reason})` };
		return { kind: 'serial', serial: p.serial };
	}
	return { kind: 'unknown', reason: NOT_A_LABEL };
}
