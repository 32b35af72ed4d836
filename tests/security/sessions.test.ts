/**
 * Sessions end when they should (OWASP ASVS 4.0 V3.3.1: sign-out invalidates the session;
 * V3.3.3: a password change can end every other session). The request hook lets a session
 * token in only while its session version equals the user row's; these tests check that
 * every event that must end sessions raises that version, and that a deactivated
 * organisation's people are no longer anyone. (The hook itself, with real cookies, is
 * exercised against the built server in e2e/security.spec.ts.)
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { and, eq, isNull } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { mailOutbox, users, userTokens } from '$lib/server/db/schema';
import { endSessions } from '$lib/server/services/users';
import { redeemToken, requestPasswordReset } from '$lib/server/services/account-links';
import { setDealerActive } from '$lib/server/services/dealers';
import { findActor } from '$lib/server/services/actors';
import { closeMailer } from '$lib/server/mail';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';
import { afterAll } from 'vitest';

let db: Db;
let admin: Actor;
const BASE = 'https://register.tidewater.example';
beforeAll(async () => {
	db = await createSeededDb();
	admin = await actorFor(db, 'admin@tidewater.example');
});
afterAll(() => closeMailer(db));

const versionOf = async (email: string) =>
	(await db.select().from(users).where(eq(users.email, email)))[0].sessionVersion;

const links = async (to: string) =>
	(await db.select().from(mailOutbox).where(eq(mailOutbox.toAddr, to))).map(
		(m) => /\/reset\/([A-Za-z0-9_-]+)/.exec(m.text)![1]
	);

describe('session version', () => {
	it('is read with the user row, and sign-out raises it', async () => {
		const email = 'workshop@tidewater.example';
		const before = await findActor(db, { email });
		expect(before?.sessionVersion).toBe(await versionOf(email));
		await endSessions(db, before!.userId!);
		const after = await findActor(db, { email });
		expect(after!.sessionVersion).toBe(before!.sessionVersion! + 1);
	});

	it('a password reset raises it and spends every other reset link of the user', async () => {
		const email = 'warranty@tidewater.example';
		const t0 = new Date();
		await requestPasswordReset(db, email, BASE, t0);
		await requestPasswordReset(db, email, BASE, t0);
		const [first, second] = await links(email);
		const v0 = await versionOf(email);
		await redeemToken(db, second, 'reset', 'a-brand-new-passphrase', t0);
		expect(await versionOf(email)).toBeGreaterThan(v0);
		await expect(redeemToken(db, first, 'reset', 'another-new-passphrase', t0)).rejects.toThrow(
			/already been used/
		);
		const [u] = await db.select().from(users).where(eq(users.email, email));
		const open = await db
			.select()
			.from(userTokens)
			.where(and(eq(userTokens.userId, u.id), isNull(userTokens.usedAt)));
		expect(open).toHaveLength(0);
	});

	it('a change of role or organisation, and deactivation, raise it whoever writes the row', async () => {
		const email = 'tech@tidewater.example';
		const [u] = await db.select().from(users).where(eq(users.email, email));
		const v0 = u.sessionVersion;
		await db.update(users).set({ role: 'workshop' }).where(eq(users.id, u.id));
		expect(await versionOf(email)).toBe(v0 + 1);
		await db.update(users).set({ name: 'Renamed Only' }).where(eq(users.id, u.id));
		expect(await versionOf(email)).toBe(v0 + 1);
		await db.update(users).set({ active: false }).where(eq(users.id, u.id));
		expect(await versionOf(email)).toBe(v0 + 2);
		expect(await findActor(db, { email })).toBeNull();
	});

	it('deactivating a dealer ends its people’s sessions and stops them being anyone', async () => {
		const dealerPeople = await db.select().from(users).where(eq(users.organisationId, 2));
		expect(dealerPeople.length).toBeGreaterThan(0);
		const actor = await findActor(db, { id: dealerPeople[0].id });
		expect(actor).not.toBeNull();
		await setDealerActive(db, admin, 2, false);
		for (const p of dealerPeople) {
			const [now] = await db.select().from(users).where(eq(users.id, p.id));
			expect(now.sessionVersion).toBe(p.sessionVersion + 1);
			expect(await findActor(db, { id: p.id })).toBeNull();
		}
		await setDealerActive(db, admin, 2, true);
		expect(await findActor(db, { id: dealerPeople[0].id })).not.toBeNull();
	});
});
