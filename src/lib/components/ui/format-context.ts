import { getContext, setContext } from 'svelte';
import { createFormat, type Format } from '$lib/domain/format';
import type { CalendarSettings } from '$lib/domain/calendar-settings';

const KEY = Symbol('format');

/**
 * Makes the organisation's formatter available to every component below the root layout.
 * `settings` is read on each call, so a change of locale or zone applies after the layout reloads.
 */
export function provideFormat(settings: () => Partial<CalendarSettings>): void {
	const current = () => createFormat(settings());
	const format: Format = {
		get locale() {
			return current().locale;
		},
		get timeZone() {
			return current().timeZone;
		},
		day: (v) => current().day(v),
		dateTime: (v) => current().dateTime(v),
		time: (v) => current().time(v),
		number: (v, d) => current().number(v, d),
		fixed: (v, d) => current().fixed(v, d),
		decimal: (v, min, max) => current().decimal(v, min, max),
		significant: (v, d) => current().significant(v, d),
		unit: (v, u, d) => current().unit(v, u, d)
	};
	setContext(KEY, format);
}

/** The organisation's formatter (the defaults outside the app's layout, e.g. in a component test). */
export function useFormat(): Format {
	return getContext<Format | undefined>(KEY) ?? createFormat();
}
