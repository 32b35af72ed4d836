import { and, asc, count, eq, isNotNull, isNull, or, sql, type SQL } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { organisations, users } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError, NotFoundError } from '$lib/server/errors';
import { membershipProblem } from '$lib/domain/membership';
import type { PeopleQuery, PersonPatch } from '$lib/schemas/people';
import { containsText } from '$lib/server/db/like';
import { recordAudit } from './audit';

/** Most people one list shows; the search narrows it. */
export const PEOPLE_CAP = 1000;

/**
 * People for the admin's list and `GET /api/users`: search by name or e-mail, filter by role
 * and status (active, inactive, invited = never set a password). Admin only (the caller guards).
 */
export async function searchPeople(db: Db, q: PeopleQuery & { id?: number } = {}) {
	const where: (SQL | undefined)[] = [];
	if (q.id !== undefined) where.push(eq(users.id, q.id));
	if (q.q) {
		where.push(
			or(
				containsText(users.name, q.q),
				containsText(users.email, q.q),
				sql`cast(${users.id} as text) = ${q.q}`
			)
		);
	}
	if (q.role) where.push(eq(users.role, q.role));
	if (q.status === 'active') where.push(and(eq(users.active, true), isNotNull(users.passwordHash)));
	if (q.status === 'inactive') where.push(eq(users.active, false));
	if (q.status === 'invited') where.push(and(eq(users.active, true), isNull(users.passwordHash)));
	const rows = await db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			organisationId: users.organisationId,
			organisation: organisations.name,
			organisationActive: organisations.active,
			active: users.active,
			invited: sql<number>`${users.passwordHash} is null`,
			lastSignInAt: users.lastSignInAt
		})
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.where(where.length ? and(...where) : undefined)
		.orderBy(asc(organisations.name), asc(users.name))
		.limit(PEOPLE_CAP);
	return rows.map((r) => ({ ...r, invited: !!r.invited }));
}

async function activeAdmins(db: Db): Promise<number> {
	const [{ n }] = await db
		.select({ n: count() })
		.from(users)
		.where(and(eq(users.role, 'admin'), eq(users.active, true)));
	return n;
}

/**
 * Changes a person's role, organisation or whether they may sign in. A role that does not
 * fit the organisation is refused in words; any change ends the person's sessions at once
 * (their session version rises); every change is audited with the fields before and after.
 * The last active administrator cannot be demoted or switched off, nor can admins switch
 * themselves off.
 */
export async function updatePerson(db: Db, actor: Actor, id: number, patch: PersonPatch) {
	const [person] = await db.select().from(users).where(eq(users.id, id));
	if (!person) throw new NotFoundError(`There is no person number ${id}.`);
	const organisationId = patch.organisationId ?? person.organisationId;
	const role = patch.role ?? person.role;
	const active = patch.active ?? person.active;
	const [org] = await db.select().from(organisations).where(eq(organisations.id, organisationId));
	if (!org)
		throw new InvalidInputError('That organisation does not exist.', [
			{ path: 'organisationId', message: 'Choose an organisation from the list.' }
		]);
	const problem = membershipProblem(role, org.kind);
	if (problem)
		throw new InvalidInputError(`${problem} Choose another role or organisation.`, [
			{ path: patch.role !== undefined ? 'role' : 'organisationId', message: problem }
		]);
	if (person.id === actor.userId && !active)
		throw new InvalidInputError(
			'You cannot switch off your own access. Ask another administrator.'
		);
	const losesAdmin = person.role === 'admin' && person.active && (role !== 'admin' || !active);
	if (losesAdmin && (await activeAdmins(db)) <= 1)
		throw new ConflictError(
			'This is the last active administrator. Make someone else an administrator first.'
		);

	const before = {
		role: person.role,
		organisationId: person.organisationId,
		active: person.active
	};
	const after = { role, organisationId, active };
	const changed = (Object.keys(after) as (keyof typeof after)[]).filter(
		(k) => after[k] !== before[k]
	);
	if (!changed.length) return { id, changed: [] as string[] };
	await writeTx(db, async (tx) => {
		await tx
			.update(users)
			.set({ role, organisationId, active, sessionVersion: sql`${users.sessionVersion} + 1` })
			.where(eq(users.id, id));
		await recordAudit(tx, actor, {
			action:
				active !== before.active ? (active ? 'user.reactivate' : 'user.deactivate') : 'user.update',
			entity: 'user',
			entityId: id,
			before: Object.fromEntries(changed.map((k) => [k, before[k]])),
			after: Object.fromEntries(changed.map((k) => [k, after[k]]))
		});
	});
	return { id, changed: changed as string[] };
}

/** One person as the API shows them. */
export function personForApi(p: Awaited<ReturnType<typeof searchPeople>>[number]) {
	return {
		id: p.id,
		email: p.email,
		name: p.name,
		role: p.role,
		organisationId: p.organisationId,
		active: p.active,
		lastSignInAt: p.lastSignInAt ? p.lastSignInAt.toISOString() : null
	};
}
