/**
 * Yearly reference numbers such as CL-2026-0042 (claims), SH-2026-0007 (shipments) and
 * PLC-2026-00012 (commissioning certificates): a code, the calendar year, and a number that
 * restarts at 1 each year. The number is zero-padded to a minimum width only; past it the
 * number simply grows (PLC-2026-100000 follows PLC-2026-99999), and the next number is found
 * by comparing numbers, never text.
 */

/** The reference of number `n` in `year`. */
export function yearlyReference(code: string, year: number, n: number, width: number): string {
	if (!Number.isSafeInteger(n) || n < 1)
		throw new RangeError(`A reference number starts at 1, got ${n}.`);
	if (!Number.isInteger(year) || year < 1000 || year > 9999)
		throw new RangeError(`A reference year has four digits, got ${year}.`);
	return `${code}-${year}-${String(n).padStart(width, '0')}`;
}

/** The prefix shared by every reference of a year: `CL-2026-`. */
export function yearlyPrefix(code: string, year: number): string {
	return `${code}-${year}-`;
}

/** Reads a yearly reference back into its parts; null when it is not one of `code`. */
export function parseYearlyReference(
	code: string,
	reference: string
): { year: number; n: number } | null {
	if (typeof reference !== 'string' || reference.length > code.length + 30) return null;
	if (!reference.startsWith(`${code}-`)) return null;
	const m = /^(\d{4})-(\d{1,15})$/.exec(reference.slice(code.length + 1));
	if (!m) return null;
	return { year: Number(m[1]), n: Number(m[2]) };
}
