import { beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { auditLog, mailOutbox, organisations, users } from '$lib/server/db/schema';
import { searchPeople, updatePerson } from '$lib/server/services/people';
import { inviteUser, resendInvitation } from '$lib/server/services/users';
import { personPatchSchema } from '$lib/schemas/people';
import type { Actor } from '$lib/server/actor';
import { actorFor, createSeededDb } from '../factories/db';

let db: Db;
let admin: Actor;
const BASE = 'https://register.tidewater.example';
const idOf = async (email: string) =>
	(await db.select({ id: users.id }).from(users).where(eq(users.email, email)))[0].id;
const row = async (id: number) => (await db.select().from(users).where(eq(users.id, id)))[0];

beforeAll(async () => {
	db = await createSeededDb();
	admin = await actorFor(db, 'admin@tidewater.example');
});

describe('people: the admin changes a role, an organisation, access', () => {
	it('lists and searches people with their status and last sign-in', async () => {
		const all = await searchPeople(db);
		expect(all.length).toBeGreaterThanOrEqual(7);
		const found = await searchPeople(db, { q: 'ridgeline' });
		expect(found.map((p) => p.email).sort()).toEqual([
			'dealer@ridgeline.example',
			'tech@ridgeline.example'
		]);
		expect(found[0]).toHaveProperty('lastSignInAt');
		expect(await searchPeople(db, { q: '%' })).toEqual([]);
	});

	it("changes a technician's role; their sessions end (session version rises); audited", async () => {
		const id = await idOf('tech@tidewater.example');
		const before = await row(id);
		const r = await updatePerson(db, admin, id, { role: 'warranty' });
		expect(r.changed).toEqual(['role']);
		const after = await row(id);
		expect(after.role).toBe('warranty');
		expect(after.sessionVersion).toBeGreaterThan(before.sessionVersion);
		const [entry] = await db
			.select()
			.from(auditLog)
			.where(eq(auditLog.entityId, String(id)))
			.orderBy(auditLog.id);
		expect(JSON.parse(entry.before!)).toEqual({ role: 'field_tech' });
		expect(JSON.parse(entry.after!)).toEqual({ role: 'warranty' });
		await updatePerson(db, admin, id, { role: 'field_tech' });
	});

	it('refuses a role that does not fit the organisation, in words', async () => {
		const id = await idOf('dealer@saltmarsh.example');
		await expect(updatePerson(db, admin, id, { role: 'warranty' })).rejects.toThrow(
			'A Warranty officer belongs to the assembler, not to a dealer.'
		);
		expect((await row(id)).role).toBe('dealer');
	});

	it('deactivates and reactivates; deactivation ends sessions', async () => {
		const id = await idOf('dealer@ridgeline.example');
		const v0 = (await row(id)).sessionVersion;
		await updatePerson(db, admin, id, { active: false });
		const off = await row(id);
		expect(off.active).toBe(false);
		expect(off.sessionVersion).toBeGreaterThan(v0);
		expect((await searchPeople(db, { status: 'inactive' })).map((p) => p.id)).toContain(id);
		await updatePerson(db, admin, id, { active: true });
		expect((await row(id)).active).toBe(true);
	});

	it('keeps the last active administrator, and admins cannot switch themselves off', async () => {
		await expect(updatePerson(db, admin, admin.userId!, { active: false })).rejects.toThrow(
			/your own access/
		);
		await expect(updatePerson(db, admin, admin.userId!, { role: 'workshop' })).rejects.toThrow(
			/last active administrator/
		);
	});

	it('an unknown person is a 404', async () => {
		await expect(updatePerson(db, admin, 99_999, { active: false })).rejects.toMatchObject({
			status: 404
		});
	});
});

describe('resending an invitation', () => {
	it('sends a new link and the earlier one stops working', async () => {
		const [org] = await db.select().from(organisations).where(eq(organisations.kind, 'dealer'));
		const id = await inviteUser(
			db,
			admin,
			{
				email: 'marlo@saltmarsh.example',
				name: 'Marlo Fen',
				role: 'field_tech',
				organisationId: org.id
			},
			BASE
		);
		await resendInvitation(db, admin, id, BASE);
		const mails = await db
			.select()
			.from(mailOutbox)
			.where(eq(mailOutbox.toAddr, 'marlo@saltmarsh.example'));
		expect(mails).toHaveLength(2);
		expect(mails[0].text).toContain('as Field technician for');
		const seeded = await idOf('workshop@tidewater.example');
		await expect(resendInvitation(db, admin, seeded, BASE)).rejects.toThrow(
			/already set a password/
		);
	});
});

describe('personPatchSchema (PATCH /api/users/{id})', () => {
	it('takes role, organisationId and active only', () => {
		expect(personPatchSchema.safeParse({ active: false }).success).toBe(true);
		expect(personPatchSchema.safeParse({ active: 'false' }).data).toEqual({ active: false });
		expect(personPatchSchema.safeParse({}).success).toBe(false);
		expect(personPatchSchema.safeParse({ email: 'x@y.example' }).success).toBe(false);
		expect(personPatchSchema.safeParse({ role: 'superuser' }).success).toBe(false);
	});
});
