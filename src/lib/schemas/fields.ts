/**
 * The field readers every schema shares, so a form field means the same on every page:
 * decimals (one rule, `domain/decimal.ts`), optional text with a maximum length, yes/no,
 * integers from a query string and real calendar dates. Safe for the browser.
 *
 * Every text field has a maximum length: a 200 KB string in any field is refused at once
 * with the field's own message (zod checks the length before anything else runs on it).
 */
import { z } from 'zod';
import { readDecimal } from '$lib/domain/decimal';
import { isCalendarDate } from '$lib/domain/calendar';

export { readDecimal } from '$lib/domain/decimal';

/** Usual limits (common practice): a name, a line of text, a paragraph, a report. */
export const TEXT_MAX = { name: 120, line: 300, paragraph: 2000, report: 4000 } as const;

/** Blank form text (only spaces, or nothing) means "not given". */
export const blankToUndefined = (v: unknown) =>
	typeof v === 'string' && v.trim() === '' ? undefined : v;

/**
 * A decimal typed in a form (or a number in JSON). `inner` says what the number must be
 * and in which words; blank gives `undefined` (so `inner` can say "required" or be optional),
 * or null when `blank: 'null'`. Unreadable text reaches `inner` as text, so its own
 * "must be a number" message is the one shown.
 */
export function decimal<T extends z.ZodType>(
	inner: T,
	opts: { blank?: 'undefined' | 'null' } = {}
) {
	return z.preprocess((v) => {
		const n = readDecimal(v);
		if (n === null) return opts.blank === 'null' ? null : undefined;
		return n === 'invalid' ? (typeof v === 'string' ? v.slice(0, 50) : v) : n;
	}, inner);
}

/** Optional text: blank → undefined, trimmed, at most `max` characters. */
export function optionalText(max: number, message = `Use at most ${max} characters.`) {
	return z.preprocess(
		blankToUndefined,
		z.string().trim().max(max, { error: message, abort: true }).optional()
	);
}

/** Optional text stored as null when blank. */
export function nullableText(max: number, message = `Use at most ${max} characters.`) {
	return z.preprocess(
		(v) => (v === undefined || blankToUndefined(v) === undefined ? null : v),
		z.string().trim().max(max, { error: message, abort: true }).nullable()
	);
}

/** Required text of `min`–`max` characters, with the field's own words for each problem. */
export function requiredText(
	max: number,
	messages: { required: string; tooShort?: string; tooLong?: string; min?: number }
) {
	return z
		.string({ error: messages.required })
		.trim()
		.max(max, { error: messages.tooLong ?? `Use at most ${max} characters.`, abort: true })
		.min(messages.min ?? 1, { error: messages.tooShort ?? messages.required });
}

/** A yes/no answer: 'yes' / 'no' (or true/false from JSON); blank → null ("not checked"). */
export function yesNo(label: string) {
	return z.preprocess(
		(v) =>
			v === 'yes' || v === true || v === 'true'
				? true
				: v === 'no' || v === false || v === 'false'
					? false
					: v === '' || v == null
						? null
						: v,
		z.boolean({ error: `${label}: answer yes or no, or leave it open if not checked.` }).nullable()
	);
}

/** A whole number from a query string; blank or absent → undefined. */
export function queryInt(min: number, max: number, label: string) {
	const message = `${label} must be a whole number from ${min} to ${max}.`;
	return z.preprocess(
		(v) => (typeof v === 'string' && v.length > 20 ? 'x' : blankToUndefined(v)),
		z.coerce
			.number({ error: message })
			.int({ error: message })
			.min(min, { error: message })
			.max(max, { error: message })
			.optional()
	);
}

/**
 * A real calendar day written YYYY-MM-DD (2026-02-30 and 2026-99-99 refused; 2028-02-29 taken).
 * Two messages: one for text that is not written as a date, one for a day that does not exist.
 */
export function calendarDate(label: string) {
	const shape = `${label}: write the date as YYYY-MM-DD, like 2026-11-30.`;
	const missing = `${label}: this date does not exist; give a real date, checking the month and day.`;
	return z
		.string({ error: shape })
		.trim()
		.max(10, { error: shape, abort: true })
		.refine((s) => s.length === 10 && /^\d{4}-\d{2}-\d{2}$/.test(s), { error: shape, abort: true })
		.refine(isCalendarDate, { error: missing });
}

/** An optional calendar day: blank or absent → undefined. */
export const optionalCalendarDate = (label: string) =>
	z.preprocess(blankToUndefined, calendarDate(label).optional());

/** One of a fixed list, from a form's select or a query string; blank or absent → undefined. */
export function optionalChoice<const T extends readonly [string, ...string[]]>(
	values: T,
	message: string
) {
	return z.preprocess(blankToUndefined, z.enum(values, { error: message }).optional());
}

/** True or false from JSON, or "true"/"false" from a form's select. */
export function trueFalse(message = 'Say true or false.') {
	return z.union([
		z.boolean({ error: message }),
		z.enum(['true', 'false'], { error: message }).transform((v) => v === 'true')
	]);
}

/**
 * The id of a record chosen in a form (a select's value) or named in a URL: a positive whole
 * number. Text longer than 20 characters is refused before it is read as a number.
 */
export function recordId(message: string) {
	return z.preprocess(
		(v) => (typeof v === 'string' && v.length > 20 ? 'x' : v),
		z.coerce
			.number({ error: message })
			.int({ error: message })
			.positive({ error: message })
			.max(Number.MAX_SAFE_INTEGER, { error: message })
	);
}
