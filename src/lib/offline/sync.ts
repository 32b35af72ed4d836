/**
 * Sends the changes waiting on the phone to `POST /api/sync` once there is a network, in
 * order and in parts (at most SYNC_BATCH_BYTES and MAX_SYNC_OPERATIONS each), and keeps each
 * answer with its change: applied (with what it made), or rejected with the issues, where it
 * waits for the technician's choice. A change that depends on one not yet in the register
 * waits for it and is not sent.
 */
import { MAX_SYNC_OPERATIONS, SYNC_BATCH_BYTES, type SyncResult } from '$lib/offline/contract';
import type { SyncOperation } from '$lib/schemas/sync';
import { allOps, type QueuedOp } from './store';
import type { userDb } from './store';

type Db = Awaited<ReturnType<typeof userDb>>;

const dependencyOf = (op: QueuedOp): string | null => {
	const ref = op.type === 'createSystem' ? op.payload.siteId : op.payload.systemId;
	return typeof ref === 'string' ? ref : null;
};

async function base64(blob: Blob): Promise<string> {
	const bytes = new Uint8Array(await blob.arrayBuffer());
	let s = '';
	for (let i = 0; i < bytes.length; i += 0x8000)
		s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
	return btoa(s);
}

/** The operation as the API takes it (a photo's bytes go as base64). */
export async function toWire(op: QueuedOp): Promise<SyncOperation> {
	if (op.type !== 'addPhoto' || !op.blob) return { id: op.id, type: op.type, payload: op.payload };
	const photo = { ...(op.payload.photo as object), base64: await base64(op.blob) };
	return { id: op.id, type: op.type, payload: { ...op.payload, photo } };
}

/**
 * Which waiting changes go now: in order, skipping any whose record was made by a change
 * that is not in the register and not going in this same send (it is marked blocked).
 */
export function sendable(ops: QueuedOp[]): { send: QueuedOp[]; blocked: QueuedOp[] } {
	const byId = new Map(ops.map((o) => [o.id, o]));
	const going = new Set<string>();
	const send: QueuedOp[] = [];
	const blocked: QueuedOp[] = [];
	for (const op of ops) {
		if (op.status !== 'waiting' && op.status !== 'blocked') continue;
		const dep = dependencyOf(op);
		const parent = dep ? byId.get(dep) : undefined;
		if (parent && parent.status !== 'applied' && !going.has(parent.id)) {
			blocked.push(op);
			continue;
		}
		going.add(op.id);
		send.push(op);
	}
	return { send, blocked };
}

export interface SyncReport {
	sent: number;
	applied: number;
	rejected: number;
	/** Set when the register could not be reached or refused the whole request. */
	error?: string;
}

/** One round of sending; `fetcher` is the page's fetch. Never throws: problems come back in the report. */
export async function syncNow(db: Db, fetcher: typeof fetch = fetch): Promise<SyncReport> {
	const report: SyncReport = { sent: 0, applied: 0, rejected: 0 };
	const ops = await allOps(db);
	const { send, blocked } = sendable(ops);
	for (const op of blocked)
		if (op.status !== 'blocked') await db.put('ops', { ...op, status: 'blocked' });
	let i = 0;
	while (i < send.length) {
		const batch: SyncOperation[] = [];
		let bytes = 0;
		while (i < send.length && batch.length < MAX_SYNC_OPERATIONS) {
			const wire = await toWire(send[i]);
			const size = JSON.stringify(wire).length;
			if (batch.length && bytes + size > SYNC_BATCH_BYTES) break;
			batch.push(wire);
			bytes += size;
			i++;
		}
		let results: SyncResult[];
		try {
			const res = await fetcher('/api/sync', {
				method: 'POST',
				headers: { 'content-type': 'application/json', accept: 'application/json' },
				body: JSON.stringify({ operations: batch })
			});
			const body = await res.json().catch(() => ({}));
			if (!res.ok)
				return { ...report, error: body.message ?? `The register answered ${res.status}.` };
			results = body.results;
		} catch {
			return { ...report, error: 'No connection to the register; the changes stay on the phone.' };
		}
		const sentAt = Date.now();
		for (const r of results) {
			const op = await db.get('ops', r.id);
			if (!op) continue;
			report.sent++;
			if (r.status === 'rejected') {
				report.rejected++;
				await db.put('ops', { ...op, status: 'rejected', issues: r.issues ?? [], sentAt });
			} else {
				report.applied++;
				await db.put('ops', { ...op, status: 'applied', ref: r.ref, issues: undefined, sentAt });
			}
		}
	}
	// What waited for a change that has now gone in can go next time.
	for (const op of await allOps(db)) {
		if (op.status !== 'blocked') continue;
		const dep = dependencyOf(op);
		const parent = dep ? await db.get('ops', dep) : undefined;
		if (!parent || parent.status === 'applied') await db.put('ops', { ...op, status: 'waiting' });
	}
	return report;
}
