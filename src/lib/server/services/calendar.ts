import { eq } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { organisations } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import {
	calendarDay,
	calendarYear,
	DEFAULT_LOCALE,
	DEFAULT_TIME_ZONE,
	type CalendarSettings
} from '$lib/domain/calendar';
import type { CalendarSettingsInput } from '$lib/schemas/organisation';
import { recordAudit } from './audit';

/** Read once per database and process; cleared when an administrator changes it. */
const cached = new WeakMap<Db | Tx, CalendarSettings>();

/** The assembler organisation's time zone and locale (the defaults before it exists). */
export async function assemblerCalendar(db: Db | Tx): Promise<CalendarSettings> {
	const hit = cached.get(db);
	if (hit) return hit;
	const [org] = await db
		.select({ timeZone: organisations.timeZone, locale: organisations.locale })
		.from(organisations)
		.where(eq(organisations.kind, 'assembler'))
		.limit(1);
	const settings = org ?? { timeZone: DEFAULT_TIME_ZONE, locale: DEFAULT_LOCALE };
	if (org) cached.set(db, settings);
	return settings;
}

/** Today (or the day of `now`) on the assembler's calendar: every business date comes from here. */
export async function businessDay(db: Db | Tx, now: Date): Promise<string> {
	return calendarDay(now, (await assemblerCalendar(db)).timeZone);
}

/** The year of `now` on the assembler's calendar: yearly numbers (claims, shipments …) restart with it. */
export async function businessYear(db: Db | Tx, now: Date): Promise<number> {
	return calendarYear(now, (await assemblerCalendar(db)).timeZone);
}

/** Sets the assembler's time zone and locale (administrators only); audited. */
export async function updateAssemblerCalendar(
	db: Db,
	actor: Actor,
	input: CalendarSettingsInput,
	now = new Date()
): Promise<CalendarSettings> {
	assertCan(
		actor,
		'manageCalendar',
		'Only an administrator sets the organisation’s time zone and locale.',
		{ allowSystem: true }
	);
	const result = await writeTx(db, async (tx) => {
		const [before] = await tx
			.select()
			.from(organisations)
			.where(eq(organisations.kind, 'assembler'))
			.limit(1);
		if (!before) throw new NotFoundError('The assembler organisation is not set up yet.');
		await tx
			.update(organisations)
			.set({ timeZone: input.timeZone, locale: input.locale })
			.where(eq(organisations.id, before.id));
		await recordAudit(tx, actor, {
			action: 'organisation.calendar',
			entity: 'organisation',
			entityId: before.id,
			before: { timeZone: before.timeZone, locale: before.locale },
			after: { timeZone: input.timeZone, locale: input.locale },
			at: now
		});
		return { timeZone: input.timeZone, locale: input.locale };
	});
	cached.delete(db);
	return result;
}
