import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	modelPassportItems,
	moduleModels,
	organisations,
	users,
	type Role
} from '$lib/server/db/schema';
import { hashPassword } from '$lib/server/auth/password';
import { DEMO_MODELS, DEMO_PASSPORT_ITEMS } from './demo-models';

export const DEMO_ORGS = [
	{
		kind: 'assembler' as const,
		name: 'Tidewater Cellworks',
		contactEmail: 'office@tidewater.example',
		region: 'Port Halden',
		// UTC+10 by a zone that names no real place (IANA Etc/ zones invert the sign).
		timeZone: 'Etc/GMT-10',
		locale: 'en-GB'
	},
	{
		kind: 'dealer' as const,
		name: 'Saltmarsh Solar',
		contactEmail: 'dealer@saltmarsh.example',
		region: 'Saltmarsh coast'
	},
	{
		kind: 'dealer' as const,
		name: 'Ridgeline Off-Grid Supply',
		contactEmail: 'dealer@ridgeline.example',
		region: 'Ridgeline hills'
	},
	{
		kind: 'dealer' as const,
		name: 'Northbank Electrical',
		contactEmail: 'dealer@northbank.example',
		region: 'Northbank'
	}
];

export const DEMO_USERS: { email: string; name: string; role: Role; org: string }[] = [
	{
		email: 'admin@tidewater.example',
		name: 'Maren Oakes',
		role: 'admin',
		org: 'Tidewater Cellworks'
	},
	{
		email: 'workshop@tidewater.example',
		name: 'Tobin Vale',
		role: 'workshop',
		org: 'Tidewater Cellworks'
	},
	{
		email: 'tech@tidewater.example',
		name: 'Ilse Fenwick',
		role: 'field_tech',
		org: 'Tidewater Cellworks'
	},
	{
		email: 'warranty@tidewater.example',
		name: 'Corin Ashby',
		role: 'warranty',
		org: 'Tidewater Cellworks'
	},
	{ email: 'dealer@saltmarsh.example', name: 'Petra Lund', role: 'dealer', org: 'Saltmarsh Solar' },
	{
		email: 'dealer@ridgeline.example',
		name: 'Hal Brenner',
		role: 'dealer',
		org: 'Ridgeline Off-Grid Supply'
	},
	{
		email: 'tech@ridgeline.example',
		name: 'Joss Carrow',
		role: 'field_tech',
		org: 'Ridgeline Off-Grid Supply'
	},
	{
		email: 'dealer@northbank.example',
		name: 'Ada Rowntree',
		role: 'dealer',
		org: 'Northbank Electrical'
	}
];

/** Fills the invented demo scenario. Safe to run twice: existing rows are left as they are. */
export async function seedDemo(db: Db, password = 'packledger-demo') {
	for (const o of DEMO_ORGS) await db.insert(organisations).values(o).onConflictDoNothing();
	const orgs = await db.select().from(organisations);
	const orgId = (name: string) => orgs.find((o) => o.name === name)!.id;
	const passwordHash = await hashPassword(password);
	for (const u of DEMO_USERS) {
		await db
			.insert(users)
			.values({
				email: u.email,
				name: u.name,
				role: u.role,
				organisationId: orgId(u.org),
				passwordHash
			})
			.onConflictDoNothing();
	}
	for (const m of DEMO_MODELS) await db.insert(moduleModels).values(m).onConflictDoNothing();
	const [admin] = await db.select().from(users).where(eq(users.email, 'admin@tidewater.example'));
	for (const [code, items] of Object.entries(DEMO_PASSPORT_ITEMS)) {
		const [model] = await db.select().from(moduleModels).where(eq(moduleModels.code, code));
		for (const [itemKey, item] of Object.entries(items))
			await db
				.insert(modelPassportItems)
				.values({
					modelId: model.id,
					itemKey,
					value: JSON.stringify(item.value),
					unit: item.unit,
					updatedAt: new Date('2026-09-01T00:00:00Z'),
					updatedBy: admin.id
				})
				.onConflictDoNothing();
	}
	return { orgId, adminId: admin.id };
}
