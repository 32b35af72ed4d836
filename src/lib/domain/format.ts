/**
 * How everything prints dates, numbers and units: one `Intl` formatter per locale and time
 * zone, so the same figure reads the same everywhere. Pages take the assembler organisation's
 * (through `useFormat` in components/ui/format-context, which builds on this); messages of
 * pure code (domain rules, zod schemas) use `NEUTRAL`, the default locale, unless a locale is
 * passed. Calendar days (YYYY-MM-DD business dates) are printed as the day they name;
 * instants (timestamps) in the time zone. Pure, safe for the browser.
 */
import { DEFAULT_LOCALE, DEFAULT_TIME_ZONE, type CalendarSettings } from './calendar-settings';

/** Fraction digits a unit is shown with unless the caller asks otherwise (common practice). */
const UNIT_DIGITS: Record<string, number> = {
	Wh: 0,
	kWh: 1,
	Ah: 1,
	V: 1,
	A: 0,
	'°C': 1,
	'%': 1,
	MΩ: 1,
	mΩ: 2,
	cycles: 0,
	C: 2,
	days: 0
};

/** A no-break space between a number and its unit, so the two never wrap apart. */
const NBSP = '\u00a0';

export interface Format {
	readonly locale: string;
	readonly timeZone: string;
	/** A calendar day ('2026-11-30') or an instant, as the day it is in the organisation's zone. */
	day(value: string | Date | number | null | undefined): string;
	/** An instant as date and time in the organisation's zone. */
	dateTime(value: string | Date | number | null | undefined): string;
	/** An instant's time of day in the organisation's zone. */
	time(value: string | Date | number | null | undefined): string;
	/** A number with the locale's grouping; `digits` fraction digits at most (0 by default). */
	number(value: number | null | undefined, digits?: number): string;
	/** A number with exactly `digits` fraction digits (tables of statistics line up). */
	fixed(value: number | null | undefined, digits: number): string;
	/** A number with at least `min` and at most `max` fraction digits (a reading: `51.0`, `51.25`). */
	decimal(value: number | null | undefined, min: number, max: number): string;
	/** A number to `digits` significant digits (chart axes and their ticks). */
	significant(value: number | null | undefined, digits: number): string;
	/** A number and its unit (`10,115,300 Wh`); digits default by unit. */
	unit(value: number | null | undefined, unit: string, digits?: number): string;
}

const DAY_RE = /^\d{4}-\d{2}-\d{2}$/;
const EMPTY = '—';

function toDate(value: string | Date | number): Date | null {
	const d = value instanceof Date ? value : new Date(value);
	return Number.isNaN(d.getTime()) ? null : d;
}

const cache = new Map<string, Format>();

/** The formatter of a locale and time zone (cached: Intl formatters are costly to build). */
export function createFormat(settings: Partial<CalendarSettings> = {}): Format {
	const locale = settings.locale || DEFAULT_LOCALE;
	const timeZone = settings.timeZone || DEFAULT_TIME_ZONE;
	const key = `${locale}|${timeZone}`;
	const hit = cache.get(key);
	if (hit) return hit;

	const dayOfInstant = new Intl.DateTimeFormat(locale, { dateStyle: 'medium', timeZone });
	// A calendar day names itself: read it as midnight UTC and print it in UTC.
	const dayOfCalendar = new Intl.DateTimeFormat(locale, { dateStyle: 'medium', timeZone: 'UTC' });
	const dateTime = new Intl.DateTimeFormat(locale, {
		dateStyle: 'medium',
		timeStyle: 'short',
		timeZone
	});
	const timeOfDay = new Intl.DateTimeFormat(locale, { timeStyle: 'short', timeZone });
	const numbers = new Map<number, Intl.NumberFormat>();
	const numberFormat = (digits: number) => {
		let f = numbers.get(digits);
		if (!f) {
			f = new Intl.NumberFormat(locale, { maximumFractionDigits: digits });
			numbers.set(digits, f);
		}
		return f;
	};

	const fixedFormats = new Map<number, Intl.NumberFormat>();
	const fixedFormat = (digits: number) => {
		let f = fixedFormats.get(digits);
		if (!f) {
			f = new Intl.NumberFormat(locale, {
				minimumFractionDigits: digits,
				maximumFractionDigits: digits
			});
			fixedFormats.set(digits, f);
		}
		return f;
	};

	const decimalFormats = new Map<string, Intl.NumberFormat>();
	const decimalFormat = (min: number, max: number) => {
		const k = `${min}-${max}`;
		let f = decimalFormats.get(k);
		if (!f) {
			f = new Intl.NumberFormat(locale, {
				minimumFractionDigits: min,
				maximumFractionDigits: Math.max(min, max)
			});
			decimalFormats.set(k, f);
		}
		return f;
	};

	const significantFormats = new Map<number, Intl.NumberFormat>();
	const significantFormat = (digits: number) => {
		let f = significantFormats.get(digits);
		if (!f) {
			f = new Intl.NumberFormat(locale, { maximumSignificantDigits: digits });
			significantFormats.set(digits, f);
		}
		return f;
	};

	const format: Format = {
		locale,
		timeZone,
		day(value) {
			if (value === null || value === undefined || value === '') return EMPTY;
			if (typeof value === 'string' && DAY_RE.test(value))
				return dayOfCalendar.format(new Date(`${value}T00:00:00Z`));
			const d = toDate(value);
			return d ? dayOfInstant.format(d) : EMPTY;
		},
		dateTime(value) {
			if (value === null || value === undefined || value === '') return EMPTY;
			const d = toDate(value);
			return d ? dateTime.format(d) : EMPTY;
		},
		time(value) {
			if (value === null || value === undefined || value === '') return EMPTY;
			const d = toDate(value);
			return d ? timeOfDay.format(d) : EMPTY;
		},
		number(value, digits = 0) {
			if (value === null || value === undefined || !Number.isFinite(value)) return EMPTY;
			return numberFormat(digits).format(value);
		},
		fixed(value, digits) {
			if (value === null || value === undefined || !Number.isFinite(value)) return EMPTY;
			return fixedFormat(digits).format(value);
		},
		decimal(value, min, max) {
			if (value === null || value === undefined || !Number.isFinite(value)) return EMPTY;
			return decimalFormat(min, max).format(value);
		},
		significant(value, digits) {
			if (value === null || value === undefined || !Number.isFinite(value)) return EMPTY;
			return significantFormat(digits).format(value);
		},
		unit(value, unit, digits) {
			if (value === null || value === undefined || !Number.isFinite(value)) return EMPTY;
			const n = numberFormat(digits ?? UNIT_DIGITS[unit] ?? 2).format(value);
			return unit === '%' ? `${n}${NBSP}%` : `${n}${NBSP}${unit}`;
		}
	};
	cache.set(key, format);
	return format;
}

/**
 * The formatter of the default locale and UTC: what messages from pure code (a domain rule's
 * reason, a schema's error) print numbers with when no locale is passed, so a figure there
 * reads as it does on a page in that locale (`10,115,300`, never `10 115 300`).
 */
export const NEUTRAL: Format = createFormat();
