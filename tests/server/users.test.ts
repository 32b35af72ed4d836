import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { mailOutbox, users } from '$lib/server/db/schema';
import { checkToken, redeemToken, requestPasswordReset } from '$lib/server/services/account-links';
import { inviteUser } from '$lib/server/services/users';
import {
	claimSignInAttempt,
	MAX_FAILURES_PER_ACCOUNT,
	signInBlockedFor,
	signInSucceeded
} from '$lib/server/auth/rate-limit';
import { verifyPassword } from '$lib/server/auth/password';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';

let db: Db;
let admin: Actor;
const BASE = 'https://register.tidewater.example';
beforeAll(async () => {
	db = await createSeededDb();
	admin = await actorFor(db, 'admin@tidewater.example');
});

const linkIn = async (to: string, path: string) => {
	const mails = await db.select().from(mailOutbox).where(eq(mailOutbox.toAddr, to));
	const m = new RegExp(`${BASE}/${path}/([A-Za-z0-9_-]+)`).exec(mails.at(-1)!.text);
	return m![1];
};

describe('invitations and resets', () => {
	it('invites by e-mail; the link sets a password once', async () => {
		await inviteUser(
			db,
			admin,
			{
				email: 'wren@saltmarsh.example',
				name: 'Wren Tamsin',
				role: 'field_tech',
				organisationId: 2
			},
			BASE
		);
		const token = await linkIn('wren@saltmarsh.example', 'welcome');
		expect((await checkToken(db, token, 'invite')).email).toBe('wren@saltmarsh.example');
		await redeemToken(db, token, 'invite', 'salt-and-tide-42');
		const [u] = await db.select().from(users).where(eq(users.email, 'wren@saltmarsh.example'));
		expect(await verifyPassword(u.passwordHash!, 'salt-and-tide-42')).toBe(true);
		await expect(redeemToken(db, token, 'invite', 'another-password-1')).rejects.toThrow(
			/already been used/
		);
	});

	it('refuses a dealer role in the assembler and a duplicate address', async () => {
		await expect(
			inviteUser(
				db,
				admin,
				{ email: 'x@tidewater.example', name: 'X Y', role: 'dealer', organisationId: 1 },
				BASE
			)
		).rejects.toThrow(/A Dealer belongs to a dealer organisation, not to the assembler/);
		await expect(
			inviteUser(
				db,
				admin,
				{ email: 'wren@saltmarsh.example', name: 'Wren', role: 'field_tech', organisationId: 2 },
				BASE
			)
		).rejects.toThrow(/already has an account/);
	});

	it('reset links expire after an hour and say nothing for unknown addresses', async () => {
		const t0 = new Date('2026-12-01T10:00:00Z');
		await requestPasswordReset(db, 'warranty@tidewater.example', BASE, t0);
		const token = await linkIn('warranty@tidewater.example', 'reset');
		await expect(checkToken(db, token, 'reset', new Date('2026-12-01T11:00:01Z'))).rejects.toThrow(
			/expired/
		);
		await expect(checkToken(db, token, 'invite', t0)).rejects.toThrow(/not valid/);
		const before = (await db.select().from(mailOutbox)).length;
		await requestPasswordReset(db, 'nobody@nowhere.example', BASE, t0);
		expect((await db.select().from(mailOutbox)).length).toBe(before);
	});
});

describe('sign-in rate limit (in the database)', () => {
	it('blocks an account after five attempts in 15 minutes, and a success clears it', async () => {
		const now = Date.parse('2026-12-01T10:00:00Z');
		for (let i = 0; i < MAX_FAILURES_PER_ACCOUNT; i++)
			expect(
				(await claimSignInAttempt(db, 'a@x.example', '10.0.0.1', now + i * 1000)).allowed
			).toBe(true);
		expect(await signInBlockedFor(db, 'a@x.example', '10.0.0.2', now + 6000)).toBeGreaterThan(0);
		expect((await claimSignInAttempt(db, 'a@x.example', '10.0.0.2', now + 6000)).allowed).toBe(
			false
		);
		expect(await signInBlockedFor(db, 'b@x.example', '10.0.0.2', now + 6000)).toBe(0);
		expect(await signInBlockedFor(db, 'a@x.example', '10.0.0.2', now + 16 * 60_000)).toBe(0);
		await signInSucceeded(db, 'a@x.example', '10.0.0.1');
		expect(await signInBlockedFor(db, 'a@x.example', '10.0.0.1', now + 7000)).toBe(0);
	});
	it('blocks an address after twenty attempts across accounts', async () => {
		const now = Date.parse('2026-12-01T10:00:00Z');
		for (let i = 0; i < 20; i++) await claimSignInAttempt(db, `u${i}@x.example`, '10.9.9.9', now);
		expect(await signInBlockedFor(db, 'fresh@x.example', '10.9.9.9', now + 1000)).toBeGreaterThan(
			0
		);
	});
	it('lets exactly five of forty parallel attempts on one account through', async () => {
		const now = Date.parse('2026-12-01T12:00:00Z');
		const claims = await Promise.all(
			Array.from({ length: 40 }, (_, i) =>
				claimSignInAttempt(db, 'parallel@x.example', `10.1.0.${i}`, now)
			)
		);
		expect(claims.filter((c) => c.allowed)).toHaveLength(MAX_FAILURES_PER_ACCOUNT);
	});
});
