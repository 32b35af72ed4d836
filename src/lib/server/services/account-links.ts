/**
 * One-time links to set a password: issuing one (the secret is mailed, only its hash kept),
 * asking for a reset, looking a link up and spending it.
 */
import { and, eq, isNull, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock, writeTx } from '$lib/server/db';
import { users, userTokens } from '$lib/server/db/schema';
import { ConflictError, NotFoundError } from '$lib/server/errors';
import { hashPassword } from '$lib/server/auth/password';
import { queueMailWork, sendMail } from '$lib/server/mail';
import { passwordResetAsked } from '$lib/server/mail/templates/accounts';
import { claimResetRequest } from '$lib/server/auth/rate-limit';
import { recordAudit } from './audit';
import { expiresAfter, hashSecret, newSecret } from './secrets';

export const RESET_VALID_HOURS = 1;

/** Stores a new one-time link for a person and returns its secret (to mail; it is not kept). */
export async function issueLink(
	db: Db,
	userId: number,
	purpose: 'invite' | 'reset',
	hours: number,
	now: Date
): Promise<string> {
	const { secret, tokenHash } = newSecret('', 32);
	await withWriteLock(db, () =>
		db
			.insert(userTokens)
			.values({ userId, purpose, tokenHash, expiresAt: expiresAfter(now, hours) })
	);
	return secret;
}

/** Sends a reset link when the address belongs to an active account; says nothing either way. */
export async function requestPasswordReset(
	db: Db,
	email: string,
	baseUrl: string,
	now = new Date()
): Promise<void> {
	const [user] = await db.select().from(users).where(eq(users.email, email));
	if (!user || !user.active) return;
	const token = await issueLink(db, user.id, 'reset', RESET_VALID_HOURS, now);
	const link = `${baseUrl}/reset/${token}`;
	await sendMail(db, {
		to: user.email,
		...passwordResetAsked({ email: user.email, link, hours: RESET_VALID_HOURS }),
		oneTimeLinks: [link]
	});
}

/**
 * What `/forgot` does: counts the request against the address's and the client's limits and,
 * within them, queues the reset mail without waiting for it. The caller answers the same
 * way whatever happened, and as fast, so neither the answer nor its timing tells whether the
 * address has an account (OWASP Forgot Password Cheat Sheet).
 */
export async function askForPasswordReset(
	db: Db,
	email: string,
	clientAddress: string,
	baseUrl: string,
	now = new Date()
): Promise<void> {
	if (!(await claimResetRequest(db, email, clientAddress, now.getTime()))) {
		console.warn(`password reset refused: too many requests for this address or client`);
		return;
	}
	queueMailWork(
		requestPasswordReset(db, email, baseUrl, now).catch((e: Error) =>
			console.error(`password reset mail not sent: ${e.message}`)
		)
	);
}

/** Looks a one-time link up without using it: who it is for, or why it no longer works. */
export async function checkToken(
	db: Db,
	token: string,
	purpose: 'invite' | 'reset',
	now = new Date()
) {
	const [row] = await db
		.select({
			id: userTokens.id,
			usedAt: userTokens.usedAt,
			expiresAt: userTokens.expiresAt,
			email: users.email,
			name: users.name,
			userId: users.id
		})
		.from(userTokens)
		.innerJoin(users, eq(userTokens.userId, users.id))
		.where(and(eq(userTokens.tokenHash, hashSecret(token)), eq(userTokens.purpose, purpose)));
	if (!row) throw new NotFoundError('This link is not valid. Ask for a new one.');
	if (row.usedAt)
		throw new ConflictError('This link has already been used. Sign in, or ask for a new link.');
	if (row.expiresAt.getTime() < now.getTime())
		throw new ConflictError('This link has expired. Ask for a new one.');
	return row;
}

/** Sets the password through a one-time link and spends the link (in one transaction). */
export async function redeemToken(
	db: Db,
	token: string,
	purpose: 'invite' | 'reset',
	password: string,
	now = new Date()
) {
	const row = await checkToken(db, token, purpose, now);
	const passwordHash = await hashPassword(password);
	await writeTx(db, async (tx) => {
		const spent = await tx
			.update(userTokens)
			.set({ usedAt: now })
			.where(and(eq(userTokens.id, row.id), isNull(userTokens.usedAt)))
			.returning({ id: userTokens.id });
		if (!spent.length) throw new ConflictError('This link has already been used.');
		// Every other link still out for this person stops working with this one.
		await tx
			.update(userTokens)
			.set({ usedAt: now })
			.where(and(eq(userTokens.userId, row.userId), isNull(userTokens.usedAt)));
		// A new password ends every session signed in with the old one (the users trigger
		// raises session_version too; this says so where it happens).
		await tx
			.update(users)
			.set({ passwordHash, sessionVersion: sql`${users.sessionVersion} + 1` })
			.where(eq(users.id, row.userId));
		await recordAudit(
			tx,
			{
				userId: row.userId,
				role: 'system',
				organisationId: null,
				dealerScoped: false,
				label: row.email
			},
			{
				action: purpose === 'invite' ? 'user.accept_invite' : 'user.reset_password',
				entity: 'user',
				entityId: row.userId,
				at: now
			}
		);
	});
	return { email: row.email };
}
