/**
 * GS1 keys and GS1 Digital Link URIs, as printed in the QR code on a module label.
 *
 * Sources (see docs/references.md §1):
 * - GS1 General Specifications: check digit (§7.9), character set 82 (§7.11)
 *   [section numbers from memory].
 * - GS1 Digital Link Standard: URI Syntax, grammar of release 1.2 (current 1.6.0).
 */

/** Thrown when a GTIN, serial or Digital Link cannot be built; the message is for people. */
export class Gs1Error extends Error {
	override readonly name = 'Gs1Error';
}

/**
 * GS1 check digit (GS1 General Specifications §7.9): weights 3, 1, 3, 1 … from the
 * rightmost data digit leftwards; check = (10 − sum mod 10) mod 10. Weighting from the
 * right is why leading zeros never change the check digit, so GTIN-8/12/13 can be
 * left-padded to 14 digits.
 */
export function gs1CheckDigit(dataDigits: string): number {
	if (!/^\d+$/.test(dataDigits)) {
		throw new Gs1Error(`A GS1 check digit is computed over digits only, not "${dataDigits}".`);
	}
	let sum = 0;
	for (let i = 0; i < dataDigits.length; i++) {
		const digit = dataDigits.charCodeAt(dataDigits.length - 1 - i) - 48;
		sum += digit * (i % 2 === 0 ? 3 : 1);
	}
	return (10 - (sum % 10)) % 10;
}

const GTIN_LENGTHS = new Set([8, 12, 13, 14]);

/** True for a GTIN-8, -12, -13 or -14: digits only, the right length, a correct check digit. */
export function isValidGtin(gtin: string): boolean {
	if (!/^\d+$/.test(gtin) || !GTIN_LENGTHS.has(gtin.length)) return false;
	return gs1CheckDigit(gtin.slice(0, -1)) === Number(gtin.at(-1));
}

/** Why a GTIN is wrong, in words a person entering it can act on; null when it is valid. */
function gtinProblem(gtin: string): string | null {
	if (!/^\d+$/.test(gtin)) return `GTIN "${gtin}" must contain digits only.`;
	if (!GTIN_LENGTHS.has(gtin.length)) {
		return `GTIN "${gtin}" has ${gtin.length} digits; a GTIN has 8, 12, 13 or 14.`;
	}
	const expected = gs1CheckDigit(gtin.slice(0, -1));
	if (expected !== Number(gtin.at(-1))) {
		return `GTIN "${gtin}" ends in ${gtin.at(-1)} but its check digit should be ${expected}; probably mistyped.`;
	}
	return null;
}

/**
 * The 14-digit form of a GTIN, which the Digital Link standard asks for in the URI
 * (a GTIN-8/12/13 is left-padded with zeros). Throws Gs1Error when invalid.
 */
export function toGtin14(gtin: string): string {
	const problem = gtinProblem(gtin);
	if (problem) throw new Gs1Error(problem);
	return gtin.padStart(14, '0');
}

/**
 * GS1 AI 21 serial: 1–20 characters of GS1 character set 82 (GS1 General
 * Specifications §7.11): ! " % & ' ( ) * + , - . / 0-9 : ; < = > ? A-Z _ a-z.
 * The ranges are contiguous in ASCII: 0x21–0x22, 0x25–0x3F, 0x41–0x5A, 0x5F, 0x61–0x7A.
 */
const CSET82 = /^[!"%&'()*+,\-./0-9:;<=>?A-Z_a-z]{1,20}$/;

export function isValidGs1Serial(serial: string): boolean {
	return CSET82.test(serial);
}

/**
 * Percent-encodes one path value of a Digital Link URI. The Digital Link grammar (URI
 * Syntax 1.2, XCHAR) keeps only letters, digits, "-", "." and "_" literal and spells every
 * other character-set-82 symbol as %XX; encodeURIComponent alone would leave
 * ! ' ( ) * and ~ bare, so those are encoded here too. Hex digits are upper case as
 * RFC 3986 §2.1 recommends.
 */
export function encodeDigitalLinkSegment(value: string): string {
	return encodeURIComponent(value).replace(
		/[!'()*~]/g,
		(c) => '%' + c.charCodeAt(0).toString(16).toUpperCase().padStart(2, '0')
	);
}

/**
 * A GS1 Digital Link URI for one serialised item: `{base}/01/{GTIN-14}/21/{serial}`
 * (Digital Link URI Syntax: primary key 01, key qualifier 21). Throws Gs1Error when the
 * GTIN or the serial is not valid, because a label with a broken key cannot be fixed
 * after it is printed.
 */
export function buildDigitalLink(baseUrl: string, gtin: string, serial: string): string {
	const gtin14 = toGtin14(gtin);
	if (!isValidGs1Serial(serial)) {
		throw new Gs1Error(
			`Serial "${serial}" cannot go in a GS1 Digital Link: it must be 1–20 characters of ` +
				`letters, digits and ! " % & ' ( ) * + , - . / : ; < = > ? _ (GS1 character set 82).`
		);
	}
	const base = baseUrl.replace(/\/+$/, '');
	return `${base}/01/${gtin14}/21/${encodeDigitalLinkSegment(serial)}`;
}

/** Path codes of the GTIN path, numeric or as the grammar's convenience alphas (URI Syntax 1.2). */
const GTIN_CODES = new Set(['01', 'gtin']);
const SERIAL_CODES = new Set(['21', 'ser']);
/** Qualifiers the grammar allows between the GTIN and the serial, in this order: 22, then 10. */
const QUALIFIER_ORDER: ReadonlyArray<ReadonlySet<string>> = [
	new Set(['22', 'cpv']),
	new Set(['10', 'lot'])
];

function decodeSegment(segment: string): string | null {
	try {
		return decodeURIComponent(segment);
	} catch {
		return null; // malformed %XX: not a URI anybody meant to print
	}
}

/**
 * Reads the GTIN (as GTIN-14) and serial out of a GS1 Digital Link URI on any host,
 * with or without a path prefix before /01/. Accepts the optional qualifiers 22 and 10
 * between GTIN and serial as the grammar allows (gtin-path = gtin-comp [cpv] [lot] [ser])
 * and ignores any query string (data attributes). Returns null for anything that is not
 * a Digital Link with AI 01 and AI 21, or whose GTIN check digit or serial is invalid.
 */
export function parseDigitalLink(url: string): { gtin: string; serial: string } | null {
	let parsed: URL;
	try {
		parsed = new URL(url.trim());
	} catch {
		return null;
	}
	if (parsed.protocol !== 'https:' && parsed.protocol !== 'http:') return null;

	const segments = parsed.pathname.split('/').slice(1);
	// The GS1 path is the end of the path; search for its start from the right so a
	// prefix that happens to contain "01" does not confuse us.
	for (let start = segments.length - 4; start >= 0; start--) {
		if (!GTIN_CODES.has(segments[start])) continue;
		const rest = segments.slice(start + 2);
		let i = 0;
		for (const codes of QUALIFIER_ORDER) {
			if (i < rest.length - 2 && codes.has(rest[i])) i += 2;
		}
		if (rest.length - i !== 2 || !SERIAL_CODES.has(rest[i])) continue;

		const gtin = decodeSegment(segments[start + 1]);
		const serial = decodeSegment(rest[i + 1]);
		if (gtin === null || serial === null) return null;
		if (!isValidGtin(gtin) || !isValidGs1Serial(serial)) return null;
		return { gtin: gtin.padStart(14, '0'), serial };
	}
	return null;
}
