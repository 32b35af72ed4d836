/**
 * People with an account: inviting them (and inviting again), listing them, ending their
 * sessions. The one-time links they set a password with are in account-links.ts.
 */
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock, writeTx } from '$lib/server/db';
import { organisations, users, userTokens, type Role } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { sendMail } from '$lib/server/mail';
import { accountInvited } from '$lib/server/mail/templates/accounts';
import { recordAudit } from './audit';
import { issueLink } from './account-links';
import { membershipProblem } from '$lib/domain/membership';

export const INVITE_VALID_HOURS = 72;

/** Issues an invitation link and mails it (the link is kept readable in the fake outbox only). */
async function sendInvitation(
	db: Db,
	baseUrl: string,
	now: Date,
	p: {
		to: string;
		name: string;
		userId: number;
		by: string;
		role: Role;
		organisation: string;
		again?: boolean;
	}
) {
	const link = `${baseUrl}/welcome/${await issueLink(db, p.userId, 'invite', INVITE_VALID_HOURS, now)}`;
	await sendMail(db, {
		to: p.to,
		...accountInvited({ ...p, link, hours: INVITE_VALID_HOURS }),
		oneTimeLinks: [link]
	});
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
	await sendInvitation(db, baseUrl, now, {
		to: input.email,
		name: input.name,
		userId,
		by: actor.label,
		role: input.role,
		organisation: org.name
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
	await sendInvitation(db, baseUrl, now, {
		to: u.email,
		name: u.name,
		userId: u.id,
		by: actor.label,
		role: u.role,
		organisation: u.organisation,
		again: true
	});
}

/**
 * Ends every session of a user at once (sign-out): the session version rises, and the request
 * hook refuses any token issued with an older one, copies included (OWASP ASVS 4.0 V3.3.1).
 */
export async function endSessions(db: Db, userId: number): Promise<void> {
	await withWriteLock(db, () =>
		db
			.update(users)
			.set({ sessionVersion: sql`${users.sessionVersion} + 1` })
			.where(eq(users.id, userId))
	);
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
