import { createHash, randomBytes } from 'node:crypto';
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { organisations, users, userTokens, type Role } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { hashPassword } from '$lib/server/auth/password';
import { queueMailWork, sendMail } from '$lib/server/mail';
import { claimResetRequest } from '$lib/server/auth/rate-limit';
import { recordAudit } from './audit';
import { membershipProblem } from '$lib/domain/membership';
import { ROLE_LABELS } from '$lib/roles';

export const INVITE_VALID_HOURS = 72;
export const RESET_VALID_HOURS = 1;

const sha256 = (s: string) => createHash('sha256').update(s).digest('hex');

async function issueToken(
	db: Db,
	userId: number,
	purpose: 'invite' | 'reset',
	hours: number,
	now: Date
) {
	const token = randomBytes(32).toString('base64url');
	await db.insert(userTokens).values({
		userId,
		purpose,
		tokenHash: sha256(token),
		expiresAt: new Date(now.getTime() + hours * 3600_000)
	});
	return token;
}

/**
 * Creates a user without a password and e-mails a one-time link to set one.
 * @returns the new user's id
 */
export async function inviteUser(
	db: Db,
	actor: Actor,
	input: { email: string; name: string; role: Role; organisationId: number },
	baseUrl: string,
	now = new Date()
): Promise<number> {
	const [org] = await db
		.select()
		.from(organisations)
		.where(eq(organisations.id, input.organisationId));
	if (!org)
		throw new InvalidInputError('That organisation does not exist.', [
			{ path: 'organisationId', message: 'Choose an organisation from the list.' }
		]);
	const problem = membershipProblem(input.role, org.kind);
	if (problem)
		throw new InvalidInputError(`${problem} Choose another role or organisation.`, [
			{ path: 'role', message: problem }
		]);
	const [existing] = await db
		.select({ id: users.id })
		.from(users)
		.where(eq(users.email, input.email));
	if (existing) throw new ConflictError(`${input.email} already has an account.`);

	const userId = await writeTx(db, async (tx) => {
		const [u] = await tx
			.insert(users)
			.values({ ...input })
			.returning({ id: users.id });
		await recordAudit(tx, actor, {
			action: 'user.invite',
			entity: 'user',
			entityId: u.id,
			after: input,
			at: now
		});
		return u.id;
	});
	const token = await issueToken(db, userId, 'invite', INVITE_VALID_HOURS, now);
	const link = `${baseUrl}/welcome/${token}`;
	await sendMail(db, {
		to: input.email,
		subject: 'Your Packledger account',
		text:
			`Hello ${input.name},\n\n${actor.label} has given you access to Packledger, the module register of Tidewater Cellworks, as ${ROLE_LABELS[input.role]} for ${org.name}.\n\n` +
			`Choose your password here (the link works once, for ${INVITE_VALID_HOURS} hours):\n${link}\n`,
		oneTimeLinks: [link]
	});
	return userId;
}

/**
 * Sends a new invitation link to someone who has not yet set a password; the earlier links
 * stop working. Audited.
 */
export async function resendInvitation(
	db: Db,
	actor: Actor,
	userId: number,
	baseUrl: string,
	now = new Date()
): Promise<void> {
	const [u] = await db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			active: users.active,
			passwordHash: users.passwordHash,
			organisation: organisations.name
		})
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.where(eq(users.id, userId));
	if (!u) throw new NotFoundError(`There is no person number ${userId}.`);
	if (u.passwordHash)
		throw new ConflictError(
			`${u.email} has already set a password; they can use “Forgot password” to choose a new one.`
		);
	if (!u.active) throw new ConflictError(`${u.email} is switched off. Reactivate them first.`);
	await writeTx(db, async (tx) => {
		await tx
			.update(userTokens)
			.set({ usedAt: now })
			.where(
				and(
					eq(userTokens.userId, u.id),
					eq(userTokens.purpose, 'invite'),
					isNull(userTokens.usedAt)
				)
			);
		await recordAudit(tx, actor, {
			action: 'user.resend_invite',
			entity: 'user',
			entityId: u.id,
			at: now
		});
	});
	const token = await issueToken(db, u.id, 'invite', INVITE_VALID_HOURS, now);
	const link = `${baseUrl}/welcome/${token}`;
	await sendMail(db, {
		to: u.email,
		subject: 'Your Packledger account (new link)',
		text:
			`Hello ${u.name},\n\n${actor.label} has sent you a new link to Packledger, the module register of Tidewater Cellworks, as ${ROLE_LABELS[u.role]} for ${u.organisation}. Earlier links no longer work.\n\n` +
			`Choose your password here (the link works once, for ${INVITE_VALID_HOURS} hours):\n${link}\n`,
		oneTimeLinks: [link]
	});
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
	const token = await issueToken(db, user.id, 'reset', RESET_VALID_HOURS, now);
	const link = `${baseUrl}/reset/${token}`;
	await sendMail(db, {
		to: user.email,
		subject: 'Reset your Packledger password',
		text: `Someone asked to reset the password of ${user.email}. If it was you, choose a new one here (the link works once, for ${RESET_VALID_HOURS} hour):\n${link}\n\nIf it was not you, ignore this message.`,
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
		.where(and(eq(userTokens.tokenHash, sha256(token)), eq(userTokens.purpose, purpose)));
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

/**
 * Ends every session of a user at once (sign-out): the session version rises, and the request
 * hook refuses any token issued with an older one, copies included (OWASP ASVS 4.0 V3.3.1).
 */
export async function endSessions(db: Db, userId: number): Promise<void> {
	await db
		.update(users)
		.set({ sessionVersion: sql`${users.sessionVersion} + 1` })
		.where(eq(users.id, userId));
}

export async function listUsers(db: Db) {
	return db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			active: users.active,
			hasPassword: users.passwordHash,
			organisation: organisations.name,
			lastSignInAt: users.lastSignInAt
		})
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.orderBy(asc(organisations.name), asc(users.email))
		.then((rows) => rows.map((r) => ({ ...r, hasPassword: !!r.hasPassword })));
}

export async function listOrganisations(db: Db) {
	return db.select().from(organisations).orderBy(asc(organisations.kind), asc(organisations.name));
}
