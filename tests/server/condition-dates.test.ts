/**
 * The public record's condition sentence dates a scrapping on the assembler's calendar day,
 * not the UTC day of the instant. Etc/GMT-10 is ten hours ahead of UTC (the IANA tz database's
 * "Etc" zones carry the POSIX sign, inverted): 13:59:59 UTC on 30 June 2026 is 23:59:59 on
 * 30 June there, and 14:00:00 UTC is 00:00:00 on 1 July.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { organisations } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { scrapModule } from '$lib/server/services/workshop';
import { getPublicRecord } from '$lib/server/services/modules';
import { assemblerCalendar } from '$lib/server/services/calendar';
import { actorFor, createSeededDb } from '../factories/db';
import { makeModules } from '../factories/modules';

let db: Db;
let workshop: Actor;

beforeAll(async () => {
	db = await createSeededDb();
	await db
		.update(organisations)
		.set({ timeZone: 'Etc/GMT-10' })
		.where(eq(organisations.kind, 'assembler'));
	expect((await assemblerCalendar(db)).timeZone).toBe('Etc/GMT-10');
	workshop = await actorFor(db, 'workshop@tidewater.example');
});

describe('business dates in the condition sentence', () => {
	it.each([
		['2026-06-30T13:59:59Z', '2026-06-30'],
		['2026-06-30T14:00:00Z', '2026-07-01'],
		// Leap day: 29 February 2028 starts at 14:00 UTC on the 28th there.
		['2028-02-28T14:00:00Z', '2028-02-29']
	])('a module scrapped at %s reads "scrapped on %s"', async (instant, day) => {
		const [serial] = await makeModules(db, workshop, { count: 1, built: 1 });
		await scrapModule(
			db,
			workshop,
			serial,
			{ reason: 'Dropped from the bench; case cracked.' },
			new Date(instant)
		);
		const record = await getPublicRecord(db, serial, day);
		expect(record.condition.sentence).toContain(`scrapped on ${day}:`);
	});
});
