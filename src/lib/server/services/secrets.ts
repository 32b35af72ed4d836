/**
 * Bearer secrets the register hands out once and keeps only as a hash: rig API tokens,
 * passport access links and the one-time links of invitations and password resets. One
 * way to make them (random, prefixed, shown once), to hash them, to date their expiry and
 * to revoke them, so the three kinds cannot drift apart.
 */
import { createHash, randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { writeTx, type Db } from '$lib/server/db';
import { apiTokens, passportGrants } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, NotFoundError } from '$lib/server/errors';
import { recordAudit } from './audit';

/** SHA-256 of a secret, hex: what is stored and looked up; the secret itself never is. */
export const hashSecret = (secret: string) => createHash('sha256').update(secret).digest('hex');

/** Longest secret looked up at all: anything longer is unknown without hashing it. */
export const MAX_SECRET_LENGTH = 100;

/**
 * A new secret of `bytes` random bytes (base64url) after `prefix`, with the hash to store and
 * the first ten characters to show in lists (enough to tell links apart, useless to an attacker).
 */
export function newSecret(prefix: string, bytes = 24) {
	const secret = prefix + randomBytes(bytes).toString('base64url');
	return { secret, tokenHash: hashSecret(secret), prefix: secret.slice(0, 10) };
}

/** When a secret issued at `now` stops working, `hours` later. */
export const expiresAfter = (now: Date, hours: number) =>
	new Date(now.getTime() + hours * 3600_000);

const REVOCABLE = { api_token: apiTokens, passport_grant: passportGrants } as const;
type Revocable = keyof typeof REVOCABLE;
type RowOf<K extends Revocable> = (typeof REVOCABLE)[K]['$inferSelect'];

/**
 * Revokes a secret for good: refused when there is no such record or it was revoked already
 * (the messages name it as the caller words it), audited as `<entity>.revoke`.
 */
export async function revokeSecret<K extends Revocable>(
	db: Db,
	actor: Actor,
	entity: K,
	id: number,
	words: { action: string; notFound: string; already: (row: RowOf<K>) => string },
	now = new Date()
): Promise<void> {
	const table = REVOCABLE[entity] as typeof apiTokens;
	const [row] = (await db.select().from(table).where(eq(table.id, id))) as RowOf<K>[];
	if (!row) throw new NotFoundError(words.notFound);
	if (row.revokedAt) throw new ConflictError(words.already(row));
	// The change and its audit entry in one transaction, queued with this process's writers.
	await writeTx(db, async (tx) => {
		await tx.update(table).set({ revokedAt: now }).where(eq(table.id, id));
		await recordAudit(tx, actor, {
			action: words.action,
			entity,
			entityId: id,
			before: { revokedAt: null },
			after: { revokedAt: now },
			at: now
		});
	});
}
