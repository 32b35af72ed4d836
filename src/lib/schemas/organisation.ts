import { z } from 'zod';
import { isLocale, isTimeZone } from '$lib/domain/calendar';

/** The assembler's calendar: the zone its business dates are days in, and the locale it prints in. */
export const calendarSettingsSchema = z.object({
	timeZone: z
		.string({ error: 'Enter a time zone.' })
		.trim()
		.min(1, { error: 'Enter a time zone, e.g. Etc/GMT-10 or UTC.' })
		.max(64, { error: 'A time zone name has at most 64 characters.' })
		.refine(isTimeZone, {
			error: 'Unknown time zone: use an IANA name such as Etc/GMT-10 (UTC+10) or UTC.'
		}),
	locale: z
		.string({ error: 'Enter a locale.' })
		.trim()
		.min(2, { error: 'Enter a locale, e.g. en-GB.' })
		.max(35, { error: 'A locale tag has at most 35 characters.' })
		.refine(isLocale, { error: 'Unknown locale: use a language tag such as en-GB or de-DE.' })
});
export type CalendarSettingsInput = z.infer<typeof calendarSettingsSchema>;
