import { eq } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx, type TxHook } from '$lib/server/db';
import { syncOperations } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { AppError, ConflictError, ForbiddenError } from '$lib/server/errors';
import { toIssues } from '$lib/server/validation';
import { placeModuleSchema, siteSchema, systemSchema } from '$lib/schemas/site';
import { commissioningSchema, photoSchema } from '$lib/schemas/commissioning';
import {
	CONFLICT_PATH,
	DEPENDENCY_PATH,
	recordRefSchema,
	syncPhotoSchema,
	type SyncIssue,
	type SyncOperation,
	type SyncOperationType,
	type SyncResult
} from '$lib/schemas/sync';
import { z } from 'zod';
import { createSite } from './sites';
import { createSystem } from './systems';
import { placeModule } from './system-modules';
import { loadSystemForCommissioning } from './commissioning';
import { submitCommissioning } from './commissioning-submit';
import { savePhoto } from './attachments';

type OpRow = typeof syncOperations.$inferSelect;

/** Refusal of one operation, with issues a technician can act on; the others go on. */
class Rejected extends Error {
	constructor(public readonly issues: SyncIssue[]) {
		super(issues[0]?.message ?? 'rejected');
	}
}
/** Thrown inside the write transaction when the operation id is already recorded (a concurrent replay). */
class AlreadyApplied extends Error {}

const short = (id: string) => id.slice(0, 8);
const asRef = (ref: string): number | string => (/^[1-9]\d{0,15}$/.test(ref) ? Number(ref) : ref);

async function findOp(conn: Db | Tx, id: string): Promise<OpRow | undefined> {
	const [row] = await conn.select().from(syncOperations).where(eq(syncOperations.id, id));
	return row;
}

/** The answer for an operation id that is already recorded: the same ref, nothing stored. */
function replayOf(actor: Actor, row: OpRow): SyncResult {
	if (row.userId !== actor.userId)
		return {
			id: row.id,
			status: 'rejected',
			issues: [
				{
					path: 'id',
					message:
						'This operation id was already used from another account. The phone makes a new id when the change is entered again.'
				}
			]
		};
	return { id: row.id, status: 'duplicate', ref: asRef(row.ref) };
}

function parseWith<S extends z.ZodType>(schema: S, value: unknown): z.infer<S> {
	const r = schema.safeParse(value);
	if (!r.success) throw new Rejected(toIssues(r.error));
	return r.data;
}

const CREATED_BY: Record<'site' | 'system', SyncOperationType> = {
	site: 'createSite',
	system: 'createSystem'
};

/** A record id from the payload: a number as given, or the ref of the earlier operation that created it. */
async function resolveRef(
	db: Db,
	actor: Actor,
	payload: Record<string, unknown>,
	field: 'siteId' | 'systemId'
): Promise<number> {
	const what = field === 'siteId' ? 'site' : 'system';
	const ref = parseWith(recordRefSchema(what), payload[field]);
	if (typeof ref === 'number') return ref;
	const row = await findOp(db, ref);
	if (!row || row.userId !== actor.userId || row.type !== CREATED_BY[what])
		throw new Rejected([
			{
				path: DEPENDENCY_PATH,
				message: `This change belongs to a ${what} recorded on the phone (operation ${short(ref)}), which has not reached the register yet. Send or correct that ${what} first; this change waits for it.`
			}
		]);
	return Number(row.ref);
}

/** The modules the phone showed at each string and position when the readings were taken (optional). */
const serialsSchema = z
	.array(z.array(z.string().max(60).nullable()).max(64))
	.max(64)
	.optional();

/**
 * Readings taken offline belong to the modules the phone showed. If someone else placed
 * other modules meanwhile, the checklist is refused as a conflict rather than certified
 * for modules nobody measured.
 */
async function assertSameModules(
	db: Db,
	actor: Actor,
	systemId: number,
	expected: (string | null)[][] | undefined
) {
	if (!expected) return;
	const { strings, system } = await loadSystemForCommissioning(db, actor, systemId);
	const differ = strings
		.flat()
		.filter(
			(s) => (expected[s.stringNo - 1]?.[s.position - 1] ?? null) !== (s.module?.serial ?? null)
		)
		.map(
			(s) =>
				`string ${s.stringNo} position ${s.position} holds ${s.module?.serial ?? 'no module'} (your readings: ${expected[s.stringNo - 1]?.[s.position - 1] ?? 'no module'})`
		);
	if (differ.length)
		throw new ConflictError(
			`The modules of ${system.name} changed while you were offline: ${differ.join('; ')}. Check the modules, then take the readings again or send them anyway.`
		);
}

/**
 * Runs one operation through the same schema and service as its form; returns the ref of what
 * it made. `hook` goes to the service's own write transaction, so the operation is recorded with it.
 */
async function run(
	db: Db,
	actor: Actor,
	op: SyncOperation,
	opts: { baseUrl?: string; now: Date },
	hook: TxHook
): Promise<string> {
	const p = op.payload;
	switch (op.type) {
		case 'createSite':
			return String(await createSite(db, actor, parseWith(siteSchema, p), opts.now, hook));
		case 'createSystem': {
			const siteId = await resolveRef(db, actor, p, 'siteId');
			const input = parseWith(systemSchema, p);
			return String((await createSystem(db, actor, siteId, input, opts.now, hook)).id);
		}
		case 'placeModule': {
			const systemId = await resolveRef(db, actor, p, 'systemId');
			const { scan, slot } = parseWith(placeModuleSchema, p);
			const placed = await placeModule(
				db,
				actor,
				systemId,
				slot,
				scan,
				opts.baseUrl,
				opts.now,
				hook
			);
			return placed.serial;
		}
		case 'submitCommissioning': {
			const systemId = await resolveRef(db, actor, p, 'systemId');
			const input = parseWith(commissioningSchema, p);
			await assertSameModules(db, actor, systemId, parseWith(serialsSchema, p.serials));
			return String((await submitCommissioning(db, actor, systemId, input, opts.now, hook)).id);
		}
		case 'addPhoto': {
			const systemId = await resolveRef(db, actor, p, 'systemId');
			const sent = parseWith(syncPhotoSchema, p.photo ?? {});
			const bytes = Buffer.from(sent.base64, 'base64');
			const { photo, caption } = parseWith(photoSchema, {
				photo: new File([bytes], sent.name, { type: sent.type }),
				caption: p.caption
			});
			const file = { name: photo.name, type: photo.type, bytes: new Uint8Array(bytes) };
			const row = await savePhoto(
				db,
				actor,
				{ ownerKind: 'system', ownerId: systemId },
				file,
				caption,
				opts.now,
				hook
			);
			return String(row.id);
		}
	}
}

function issuesOf(e: AppError): SyncIssue[] {
	if (e.issues?.length) return e.issues;
	// A refusal because the record changed meanwhile is marked, so the phone asks what to do.
	return [{ path: e instanceof ConflictError ? CONFLICT_PATH : '', message: e.message }];
}

/** The ref of what a service's write transaction made, from that transaction's own result. */
function refOf(type: SyncOperationType, result: unknown): string {
	if (type === 'createSite') return String(result);
	const r = result as { id?: number; serial?: string };
	return String(type === 'placeModule' ? r.serial : r.id);
}

/** Applies one operation exactly once: its id is recorded inside the write's own transaction. */
async function applyOne(
	db: Db,
	actor: Actor,
	op: SyncOperation,
	opts: { baseUrl?: string; now: Date }
): Promise<SyncResult> {
	const seen = await findOp(db, op.id);
	if (seen) return replayOf(actor, seen);
	const record = async (tx: Tx, ref: string) => {
		await tx
			.insert(syncOperations)
			.values({ id: op.id, userId: actor.userId!, type: op.type, ref, createdAt: opts.now });
	};
	try {
		let hooked = false;
		const hook: TxHook = {
			before: async (tx) => {
				// A concurrent request with the same id committed first: roll this one back.
				if (await findOp(tx, op.id)) throw new AlreadyApplied();
			},
			// The id and the ref go in with the write itself, or not at all.
			after: async (tx, result) => {
				hooked = true;
				await record(tx, refOf(op.type, result));
			}
		};
		const value = await run(db, actor, op, opts, hook);
		if (!hooked) await writeTx(db, (tx) => record(tx, value));
		return { id: op.id, status: 'applied', ref: asRef(value) };
	} catch (e) {
		// Whatever went wrong, an id recorded meanwhile means the change is in: say duplicate.
		const now = await findOp(db, op.id);
		if (now) return replayOf(actor, now);
		if (e instanceof Rejected) return { id: op.id, status: 'rejected', issues: e.issues };
		if (e instanceof AppError) return { id: op.id, status: 'rejected', issues: issuesOf(e) };
		console.error(`Sync operation ${op.id} (${op.type}) failed:`, e);
		return {
			id: op.id,
			status: 'rejected',
			issues: [
				{
					path: '',
					message:
						'The register could not apply this change because of a fault on the server. It stays on the phone; send it again later.'
				}
			]
		};
	}
}

/**
 * Applies the operations a phone queued offline, in order, each exactly once (see
 * `POST /api/sync`). Every operation runs through the same schema and service as its form,
 * so the same guards and dealer scope apply; a refused operation comes back with issues
 * and does not stop the ones after it.
 */
export async function applyOperations(
	db: Db,
	actor: Actor,
	operations: SyncOperation[],
	opts: { baseUrl?: string; now?: () => Date } = {}
): Promise<SyncResult[]> {
	assertCan(
		actor,
		'workOffline',
		'Only field technicians and administrators send work done offline.'
	);
	if (actor.userId === null)
		throw new ForbiddenError('Changes made offline are sent by a signed-in person.');
	const results: SyncResult[] = [];
	const seen = new Set<string>();
	for (const op of operations) {
		if (seen.has(op.id)) {
			results.push({
				id: op.id,
				status: 'rejected',
				issues: [{ path: 'id', message: 'The same operation id appears twice in this request.' }]
			});
			continue;
		}
		seen.add(op.id);
		results.push(
			await applyOne(db, actor, op, { baseUrl: opts.baseUrl, now: opts.now?.() ?? new Date() })
		);
	}
	return results;
}
