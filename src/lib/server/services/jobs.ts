/**
 * Scheduled jobs that must run in one process only when several app servers share the
 * database: a job runs when its process takes the job's lease, a row of `job_leases` that
 * lasts one interval. Taking it is one conditional upsert, so of two servers trying at once
 * exactly one wins; if the holder dies, another takes the lease once it has expired.
 */
import { eq, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock } from '$lib/server/db';
import { jobLeases } from '$lib/server/db/schema';
import { SYSTEM_ACTOR } from '$lib/server/actor';
import { sendDueReminders } from './campaign-reminders';

/**
 * Takes the lease of job `name` for `ttlMs` if nobody holds an unexpired one.
 * @returns true when `holder` now holds it (and should run the job)
 */
export async function takeLease(
	db: Db,
	name: string,
	holder: string,
	ttlMs: number,
	now = new Date()
): Promise<boolean> {
	const until = new Date(now.getTime() + ttlMs);
	// One autocommit statement under this process's write lock: it never holds a transaction
	// open across an await, so another server's writer only waits for the statement itself.
	const rows = await withWriteLock(db, () =>
		db
			.insert(jobLeases)
			.values({ name, holder, expiresAt: until, lastRunAt: now })
			.onConflictDoUpdate({
				target: jobLeases.name,
				set: { holder, expiresAt: until, lastRunAt: now },
				setWhere: sql`${jobLeases.expiresAt} <= ${now.getTime()}`
			})
			.returning({ holder: jobLeases.holder, expiresAt: jobLeases.expiresAt })
	);
	return rows.length === 1 && rows[0].holder === holder && +rows[0].expiresAt === +until;
}

/** Who holds a job's lease and until when (null when it never ran). */
export async function leaseOf(db: Db, name: string) {
	const [row] = await db.select().from(jobLeases).where(eq(jobLeases.name, name));
	return row ?? null;
}

export const REMINDER_JOB = 'campaign-reminders';

/**
 * One round of the campaign reminders: sends the due reminders if this process takes the
 * round's lease (one interval long); otherwise another server has this round.
 * @returns what was sent, or null when another process holds the lease
 */
export async function runReminderRound(
	db: Db,
	holder: string,
	intervalMs: number,
	now = new Date()
) {
	if (!(await takeLease(db, REMINDER_JOB, holder, intervalMs, now))) return null;
	return sendDueReminders(db, SYSTEM_ACTOR, now);
}
