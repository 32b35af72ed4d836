/**
 * The assembler's calendar settings and their defaults, apart from calendar.ts so that code
 * which only formats (domain/format, on every page) does not carry `@date-fns/tz` with it.
 */

/** Used until an administrator sets the organisation's own zone. */
export const DEFAULT_TIME_ZONE = 'UTC';
export const DEFAULT_LOCALE = 'en-GB';

/** The assembler's calendar settings, as stored on its organisation. */
export interface CalendarSettings {
	timeZone: string;
	locale: string;
}
