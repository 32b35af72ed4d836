import { desc, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { withWriteLock, writeTx } from '$lib/server/db';
import { apiTokens, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { recordAudit } from './audit';
import { businessDay } from './calendar';
import { hashSecret, newSecret, revokeSecret } from './secrets';

export const TOKEN_PREFIX = 'plk_';

/**
 * Creates a token for a test rig. The secret is returned once and only its hash is
 * stored; the token can do nothing but send factory test imports.
 */
export async function createToken(db: Db, actor: Actor, name: string, now = new Date()) {
	const { secret, tokenHash, prefix } = newSecret(TOKEN_PREFIX);
	const id = await writeTx(db, async (tx) => {
		const [row] = await tx
			.insert(apiTokens)
			.values({
				name,
				tokenHash,
				prefix,
				scope: 'imports',
				createdBy: actor.userId!,
				createdAt: now
			})
			.returning({ id: apiTokens.id });
		await recordAudit(tx, actor, {
			action: 'token.create',
			entity: 'api_token',
			entityId: row.id,
			after: { name, scope: 'imports' },
			at: now
		});
		return row.id;
	});
	return { id, secret };
}

export async function listTokens(db: Db) {
	return db
		.select({
			id: apiTokens.id,
			name: apiTokens.name,
			prefix: apiTokens.prefix,
			scope: apiTokens.scope,
			createdAt: apiTokens.createdAt,
			lastUsedAt: apiTokens.lastUsedAt,
			revokedAt: apiTokens.revokedAt,
			createdBy: users.email
		})
		.from(apiTokens)
		.innerJoin(users, eq(apiTokens.createdBy, users.id))
		.orderBy(desc(apiTokens.id));
}

/** Revokes a rig token: it stops working at once. Audited. */
export async function revokeToken(db: Db, actor: Actor, id: number, now = new Date()) {
	await revokeSecret(
		db,
		actor,
		'api_token',
		id,
		{
			action: 'token.revoke',
			notFound: 'That token does not exist.',
			already: (row) => `“${row.name}” was already revoked.`
		},
		now
	);
}

/** Resolves a bearer token to a rig actor, or says why it is refused. Records its last use. */
export async function verifyToken(
	db: Db,
	secret: string,
	now = new Date()
): Promise<{ actor: Actor; scope: 'imports' } | { error: string }> {
	const [row] = await db
		.select()
		.from(apiTokens)
		.where(eq(apiTokens.tokenHash, hashSecret(secret)));
	if (!row) return { error: 'This API token is not known. Ask an administrator for a rig token.' };
	if (row.revokedAt)
		return {
			error: `This API token (“${row.name}”) was revoked on ${await businessDay(db, row.revokedAt)}. Ask an administrator for a new one.`
		};
	// The last use, to the minute: a rig sending every few seconds writes once a minute. The
	// write queues with this process's other writers (during a long import commit it waits its
	// turn instead of busy-waiting for SQLite's lock on the event loop), and the request does
	// not wait for it.
	if (!row.lastUsedAt || now.getTime() - row.lastUsedAt.getTime() >= 60_000)
		void withWriteLock(db, () =>
			db.update(apiTokens).set({ lastUsedAt: now }).where(eq(apiTokens.id, row.id))
		).catch((e) => console.warn('token last use not recorded:', e));
	return {
		actor: {
			userId: null,
			role: 'rig',
			organisationId: null,
			dealerScoped: false,
			label: `rig token “${row.name}”`,
			tokenId: row.id
		},
		scope: row.scope
	};
}
