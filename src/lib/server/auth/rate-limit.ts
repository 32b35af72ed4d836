import { eq, sql } from 'drizzle-orm';
import { withWriteLock, type Db } from '$lib/server/db';
import { rateLimits } from '$lib/server/db/schema';

/**
 * Limits on sign-in and password-reset requests, per account and per client address, as
 * fixed-window counters in the database (table `rate_limits`), so every app process on the
 * same database shares them and a restart forgets nothing. An attempt claims its slot with
 * one atomic upsert *before* the password is checked: forty parallel attempts on one account
 * get counts 1…40, and only the first five are checked (OWASP ASVS 4.0 V2.2.1; the numbers
 * themselves are common practice). The writes queue behind this process's other writers
 * (`withWriteLock`): while an import's commit holds SQLite's write lock, an attempt waits its
 * turn on a promise instead of busy-waiting for the lock on the event loop. Another process's
 * transaction is still waited for by SQLite's busy timeout: the counts stay shared.
 */
export const WINDOW_MS = 15 * 60 * 1000;
export const MAX_FAILURES_PER_ACCOUNT = 5;
export const MAX_FAILURES_PER_ADDRESS = 20;
/** Reset mails per address and reset requests per client, per hour (common practice). */
export const RESET_WINDOW_MS = 60 * 60 * 1000;
export const MAX_RESETS_PER_ACCOUNT = 3;
export const MAX_RESETS_PER_ADDRESS = 10;

const accountKey = (email: string) => `signin:acct:${email.trim().toLowerCase()}`;
const addressKey = (address: string) => `signin:addr:${address}`;

export interface Claim {
	allowed: boolean;
	/** Minutes until the window ends (at least 1) when refused, else 0. */
	minutes: number;
}

/** Counts one attempt against `key` and says whether it is within `limit` for the window. */
export async function claim(
	db: Db,
	key: string,
	limit: number,
	windowMs: number,
	now = Date.now()
): Promise<Claim> {
	const expired = now - windowMs;
	const [row] = await withWriteLock(db, () =>
		db.all<{ count: number; window_start: number }>(sql`
		INSERT INTO rate_limits (key, window_start, count) VALUES (${key}, ${now}, 1)
		ON CONFLICT (key) DO UPDATE SET
			window_start = CASE WHEN rate_limits.window_start <= ${expired} THEN excluded.window_start ELSE rate_limits.window_start END,
			count = CASE WHEN rate_limits.window_start <= ${expired} THEN 1 ELSE rate_limits.count + 1 END
		RETURNING count, window_start`)
	);
	if (row.count <= limit) return { allowed: true, minutes: 0 };
	return {
		allowed: false,
		minutes: Math.max(1, Math.ceil((row.window_start + windowMs - now) / 60000))
	};
}

/** How a sign-in attempt stands, before the password is looked at. Counts the attempt. */
export async function claimSignInAttempt(
	db: Db,
	email: string,
	address: string,
	now = Date.now()
): Promise<Claim> {
	const account = await claim(db, accountKey(email), MAX_FAILURES_PER_ACCOUNT, WINDOW_MS, now);
	const client = await claim(db, addressKey(address), MAX_FAILURES_PER_ADDRESS, WINDOW_MS, now);
	if (account.allowed && client.allowed) return { allowed: true, minutes: 0 };
	return { allowed: false, minutes: Math.max(account.minutes, client.minutes) };
}

/** Minutes until the account or client may try again, without counting an attempt (0 = now). */
export async function signInBlockedFor(
	db: Db,
	email: string,
	address: string,
	now = Date.now()
): Promise<number> {
	const rows = await db
		.select()
		.from(rateLimits)
		.where(sql`${rateLimits.key} IN (${accountKey(email)}, ${addressKey(address)})`);
	let minutes = 0;
	for (const r of rows) {
		const limit = r.key.startsWith('signin:acct:')
			? MAX_FAILURES_PER_ACCOUNT
			: MAX_FAILURES_PER_ADDRESS;
		if (r.windowStart > now - WINDOW_MS && r.count >= limit)
			minutes = Math.max(minutes, Math.ceil((r.windowStart + WINDOW_MS - now) / 60000));
	}
	return minutes;
}

/** A successful sign-in: the account's count is cleared and the client's attempt given back. */
export async function signInSucceeded(db: Db, email: string, address: string): Promise<void> {
	await withWriteLock(db, () =>
		db.batch([
			db.delete(rateLimits).where(eq(rateLimits.key, accountKey(email))),
			db.run(
				sql`UPDATE rate_limits SET count = max(count - 1, 0) WHERE key = ${addressKey(address)}`
			)
		])
	);
}

/** One password-reset request: allowed while both the address's and the client's counts are within limits. */
export async function claimResetRequest(
	db: Db,
	email: string,
	address: string,
	now = Date.now()
): Promise<boolean> {
	const account = await claim(
		db,
		`reset:acct:${email.trim().toLowerCase()}`,
		MAX_RESETS_PER_ACCOUNT,
		RESET_WINDOW_MS,
		now
	);
	const client = await claim(
		db,
		`reset:addr:${address}`,
		MAX_RESETS_PER_ADDRESS,
		RESET_WINDOW_MS,
		now
	);
	return account.allowed && client.allowed;
}
