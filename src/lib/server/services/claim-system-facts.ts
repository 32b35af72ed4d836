/**
 * What a claim's system says for its assessment: how many modules share the throughput an
 * inverter log counts, and whether the system's latest passing commissioning proved the
 * stop-charge signal.
 */
import { and, count, desc, eq } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { commissionings, modules, systemSlots, systems } from '$lib/server/db/schema';

type Conn = Db | Tx;

/** The stop-charge item of the latest passing commissioning, or null without one. */
export type StopChargeProof = {
	proven: boolean;
	certificateNo: string | null;
	commissionedOn: string;
} | null;

/** Modules in a system: its slots, else the modules pointing at it, else series × parallel. */
export async function modulesInSystem(conn: Conn, systemId: number | null): Promise<number> {
	// A claim on delivery has no system: its modules stand alone.
	if (systemId === null) return 1;
	const [slots] = await conn
		.select({ n: count() })
		.from(systemSlots)
		.where(eq(systemSlots.systemId, systemId));
	if (slots.n > 0) return slots.n;
	const [mods] = await conn
		.select({ n: count() })
		.from(modules)
		.where(eq(modules.systemId, systemId));
	if (mods.n > 0) return mods.n;
	const [sys] = await conn
		.select({ series: systems.series, parallel: systems.parallel })
		.from(systems)
		.where(eq(systems.id, systemId));
	return Math.max(1, (sys?.series ?? 1) * (sys?.parallel ?? 1));
}

/** Whether the latest passing commissioning of the system proved the stop-charge signal. */
export async function stopChargeProof(
	conn: Conn,
	systemId: number | null
): Promise<StopChargeProof> {
	if (systemId === null) return null;
	const [c] = await conn
		.select({
			items: commissionings.items,
			certificateNo: commissionings.certificateNo,
			commissionedOn: commissionings.commissionedOn
		})
		.from(commissionings)
		.where(and(eq(commissionings.systemId, systemId), eq(commissionings.overall, 'pass')))
		.orderBy(desc(commissionings.commissionedOn), desc(commissionings.id))
		.limit(1);
	if (!c) return null;
	let items: { key?: string; status?: string }[] = [];
	try {
		items = JSON.parse(c.items);
	} catch {
		/* an unreadable record proves nothing */
	}
	const item = Array.isArray(items) ? items.find((i) => i?.key === 'stop_charge') : undefined;
	return {
		proven: item?.status === 'pass',
		certificateNo: c.certificateNo,
		commissionedOn: c.commissionedOn
	};
}
