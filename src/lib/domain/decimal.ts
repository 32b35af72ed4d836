/**
 * The one rule for reading a decimal number typed by a person, on every form and in every
 * file reader that takes typed numbers:
 *
 * - the decimal separator is a full stop or a comma, whichever the keyboard gives
 *   ("12.5" = "12,5" = 12.5); a bare fraction reads the same way (",5" = ".5" = 0.5), and a
 *   trailing separator is ignored ("5," = 5);
 * - there is at most one separator, and no grouping: "1,234.5", "1.234,5" and "1 234" are
 *   refused rather than guessed, since "1,234" could be a thousand or one and a bit;
 * - an optional sign in front ("-0,4", "+3", and the typographic minus "−2");
 * - blank means "not given".
 *
 * Pure and bounded: anything longer than 40 characters is refused before any pattern runs.
 */

const MAX_LENGTH = 40;
const DECIMAL = /^[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)$/;

/** Typed text to a number: blank → null, unreadable → 'invalid'. Numbers pass when finite. */
export function readDecimal(v: unknown): number | null | 'invalid' {
	if (v === undefined || v === null) return null;
	if (typeof v === 'number') return Number.isFinite(v) ? v : 'invalid';
	if (typeof v !== 'string') return 'invalid';
	if (v.length > MAX_LENGTH * 4) return 'invalid';
	const s = v.trim().replace(/^\u2212/, '-');
	if (s === '') return null;
	if (s.length > MAX_LENGTH || !DECIMAL.test(s)) return 'invalid';
	const n = Number(s.replace(',', '.'));
	return Number.isFinite(n) ? n : 'invalid';
}
