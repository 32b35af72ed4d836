import { and, desc, eq, sql } from 'drizzle-orm';
import { writeTx, type Db } from '$lib/server/db';
import { moduleCellLots, modules, passportGrants, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { SYSTEM_ACTOR } from '$lib/server/actor';
import { ForbiddenError, NotFoundError } from '$lib/server/errors';
import type { PassportGrantInput } from '$lib/schemas/passport';
import { findModule } from './modules';
import { recordAudit } from './audit';
import { businessDay } from './calendar';
import { expiresAfter, hashSecret, MAX_SECRET_LENGTH, newSecret, revokeSecret } from './secrets';

export const GRANT_PREFIX = 'ppa_';

type ModuleRow = typeof modules.$inferSelect;

/**
 * Issues an access link to the restricted passport data of one module or one cell lot
 * for a recycler, repairer or authority. The secret is returned once; only its hash is
 * kept. Audited.
 */
export async function issueGrant(
	db: Db,
	actor: Actor,
	input: PassportGrantInput,
	now = new Date()
) {
	let scopeValue = input.scopeValue.trim();
	if (input.scopeKind === 'module') scopeValue = (await findModule(db, null, scopeValue)).serial;
	else {
		scopeValue = scopeValue.toUpperCase();
		const [hit] = await db
			.select({ n: sql<number>`1` })
			.from(moduleCellLots)
			.where(eq(moduleCellLots.lotCode, scopeValue))
			.limit(1);
		if (!hit) throw new NotFoundError(`No module carries cells from lot ${scopeValue}.`);
	}
	const { secret, tokenHash, prefix } = newSecret(GRANT_PREFIX);
	const expiresAt = expiresAfter(now, input.days * 24);
	const id = await writeTx(db, async (tx) => {
		const [row] = await tx
			.insert(passportGrants)
			.values({
				tokenHash,
				prefix,
				partyKind: input.partyKind,
				partyName: input.partyName,
				scopeKind: input.scopeKind,
				scopeValue,
				expiresAt,
				createdBy: actor.userId!,
				createdAt: now
			})
			.returning({ id: passportGrants.id });
		await recordAudit(tx, actor, {
			action: 'passport_grant.issue',
			entity: 'passport_grant',
			entityId: row.id,
			after: {
				partyKind: input.partyKind,
				partyName: input.partyName,
				scopeKind: input.scopeKind,
				scopeValue,
				expiresAt
			},
			at: now
		});
		return row.id;
	});
	return { id, secret, expiresAt, scopeValue };
}

export async function listGrants(db: Db, limit = 200) {
	return db
		.select({
			id: passportGrants.id,
			prefix: passportGrants.prefix,
			partyKind: passportGrants.partyKind,
			partyName: passportGrants.partyName,
			scopeKind: passportGrants.scopeKind,
			scopeValue: passportGrants.scopeValue,
			expiresAt: passportGrants.expiresAt,
			createdAt: passportGrants.createdAt,
			revokedAt: passportGrants.revokedAt,
			lastUsedAt: passportGrants.lastUsedAt,
			createdBy: users.name
		})
		.from(passportGrants)
		.innerJoin(users, eq(passportGrants.createdBy, users.id))
		.orderBy(desc(passportGrants.id))
		.limit(limit);
}

/** Revokes an access link: it stops working at once. Audited. */
export async function revokeGrant(db: Db, actor: Actor, id: number, now = new Date()) {
	await revokeSecret(
		db,
		actor,
		'passport_grant',
		id,
		{
			action: 'passport_grant.revoke',
			notFound: 'That access link does not exist.',
			already: (row) => `The link for ${row.partyName} was already revoked.`
		},
		now
	);
}

/**
 * Checks an access link for a module and records its use (last used, and one audit entry
 * per use, so the assembler can show an authority who read what). Throws ForbiddenError
 * with the reason when the link is unknown, revoked, expired or for another module or lot.
 */
export async function useGrant(
	db: Db,
	secret: string,
	mod: ModuleRow,
	actor: Actor | null,
	now = new Date()
) {
	const [row] =
		secret.length <= MAX_SECRET_LENGTH
			? await db
					.select()
					.from(passportGrants)
					.where(eq(passportGrants.tokenHash, hashSecret(secret)))
			: [];
	if (!row)
		throw new ForbiddenError(
			'This passport access link is not known. Ask the assembler for a new link.'
		);
	if (row.revokedAt)
		throw new ForbiddenError(
			`This passport access link was revoked on ${await businessDay(db, row.revokedAt)}. Ask the assembler for a new link.`
		);
	if (row.expiresAt.getTime() <= now.getTime())
		throw new ForbiddenError(
			`This passport access link expired on ${await businessDay(db, row.expiresAt)}. Ask the assembler for a new link.`
		);
	const covers =
		row.scopeKind === 'module'
			? row.scopeValue === mod.serial
			: (
					await db
						.select({ n: sql<number>`1` })
						.from(moduleCellLots)
						.where(
							and(eq(moduleCellLots.moduleId, mod.id), eq(moduleCellLots.lotCode, row.scopeValue))
						)
						.limit(1)
				).length > 0;
	if (!covers)
		throw new ForbiddenError(
			`This access link is for ${row.scopeKind === 'module' ? 'module' : 'cell lot'} ${row.scopeValue}, not for module ${mod.serial}.`
		);
	// Every use is audited (who read which record), so it is written each time, with its last
	// use, in one transaction queued with this process's writers (not busy-waiting on SQLite).
	await writeTx(db, async (tx) => {
		await tx.update(passportGrants).set({ lastUsedAt: now }).where(eq(passportGrants.id, row.id));
		await recordAudit(
			tx,
			actor ?? { ...SYSTEM_ACTOR, label: `access link ${row.prefix}… (${row.partyName})` },
			{
				action: 'passport_grant.use',
				entity: 'passport_grant',
				entityId: row.id,
				after: { serial: mod.serial, party: row.partyName },
				at: now
			}
		);
	});
	return row;
}
