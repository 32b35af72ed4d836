/**
 * What the phone keeps for field work without a signal, in IndexedDB (through `idb`):
 * one database per signed-in user (`packledger-offline-u{id}`) with the pages taken offline
 * or visited (their data, as the page components take it) and the queue of changes waiting
 * to be sent, plus a small shared database that only says who signed in last. Used by the
 * pages and by the service worker alike; nothing here runs on the server.
 */
import { openDB, deleteDB, type DBSchema, type IDBPDatabase } from 'idb';
import type { SyncIssue, SyncOperationType } from '$lib/offline/contract';

export interface OfflineUser {
	id: number;
	label: string;
	role: string;
	dealerScoped: boolean;
}

/** A page's data as its component takes it, keyed by the page's path (e.g. `/systems/7/commission`). */
export interface StoredPage {
	path: string;
	data: Record<string, unknown>;
	savedAt: number;
	/** Set for pages that "take offline" fetched (kept until the site is taken off again). */
	siteId?: number;
}

/**
 * A change made offline. `waiting` goes with the next sync; `rejected` waits for the
 * technician's choice (edit, send again, discard); `blocked` waits for an earlier change it
 * depends on; `applied` is in the register (`ref` says what it made) and is kept a while so
 * the pages can follow it.
 */
export type OpStatus = 'waiting' | 'rejected' | 'blocked' | 'applied';
export interface QueuedOp {
	id: string;
	seq: number;
	type: SyncOperationType;
	payload: Record<string, unknown>;
	status: OpStatus;
	createdAt: number;
	/** Local photo bytes of an `addPhoto` (sent as base64). */
	blob?: Blob;
	issues?: SyncIssue[];
	ref?: number | string;
	sentAt?: number;
	/** What the change was, in words, for the list of waiting changes. */
	summary: string;
	/** What the phone worked out when the change was made (a checklist's verdict and day). */
	local?: { overall?: string; day?: string };
}

interface UserDb extends DBSchema {
	pages: { key: string; value: StoredPage };
	ops: { key: string; value: QueuedOp; indexes: { seq: number } };
}
interface MetaDb extends DBSchema {
	meta: { key: string; value: { key: string; user: OfflineUser | null; at: number } };
}

const META = 'packledger-offline';
/** The service worker's cache of the offline shell's layout data (who is signed in). */
export const LAYOUT_CACHE = 'pl-layout';

async function dropLayoutCache() {
	if (typeof caches !== 'undefined') await caches.delete(LAYOUT_CACHE);
}
export const userDbName = (userId: number) => `packledger-offline-u${userId}`;

function metaDb(): Promise<IDBPDatabase<MetaDb>> {
	return openDB<MetaDb>(META, 1, {
		upgrade(db) {
			db.createObjectStore('meta', { keyPath: 'key' });
		}
	});
}

export async function currentUser(): Promise<OfflineUser | null> {
	const db = await metaDb();
	try {
		return (await db.get('meta', 'user'))?.user ?? null;
	} finally {
		db.close();
	}
}

/**
 * Records who is signed in on this phone. When someone else signed in before, that
 * person's pages (site, owner and system data) are deleted here; their unsent changes are
 * kept for them, never shown to or sent by the new user.
 */
export async function setCurrentUser(user: OfflineUser | null): Promise<void> {
	const db = await metaDb();
	try {
		const before = (await db.get('meta', 'user'))?.user ?? null;
		if (before && before.id !== user?.id) {
			const theirs = await userDb(before.id);
			await theirs.clear('pages');
			theirs.close();
			await dropLayoutCache();
		}
		await db.put('meta', { key: 'user', user, at: Date.now() });
	} finally {
		db.close();
	}
}

export function userDb(userId: number): Promise<IDBPDatabase<UserDb>> {
	return openDB<UserDb>(userDbName(userId), 1, {
		upgrade(db) {
			db.createObjectStore('pages', { keyPath: 'path' });
			db.createObjectStore('ops', { keyPath: 'id' }).createIndex('seq', 'seq');
		}
	});
}

/** Everything the signed-in user keeps on this phone, or null when nobody is recorded. */
export async function openCurrent(): Promise<{
	user: OfflineUser;
	db: IDBPDatabase<UserDb>;
} | null> {
	const user = await currentUser();
	return user ? { user, db: await userDb(user.id) } : null;
}

export async function allOps(db: IDBPDatabase<UserDb>): Promise<QueuedOp[]> {
	return db.getAllFromIndex('ops', 'seq');
}

export async function addOp(
	db: IDBPDatabase<UserDb>,
	op: Omit<QueuedOp, 'seq' | 'status' | 'createdAt'> & { status?: OpStatus }
): Promise<QueuedOp> {
	const tx = db.transaction('ops', 'readwrite');
	const last = await tx.store.index('seq').openCursor(null, 'prev');
	const full: QueuedOp = {
		status: 'waiting',
		createdAt: Date.now(),
		...op,
		seq: (last?.value.seq ?? 0) + 1
	};
	await tx.store.add(full);
	await tx.done;
	return full;
}

/** Sign-out: this user's pages and queue leave the phone, and so does the record of who signed in. */
export async function wipeUser(userId: number): Promise<void> {
	await deleteDB(userDbName(userId));
	await dropLayoutCache();
	const db = await metaDb();
	try {
		const rec = await db.get('meta', 'user');
		if (rec?.user?.id === userId) await db.put('meta', { key: 'user', user: null, at: Date.now() });
	} finally {
		db.close();
	}
}

/** Changes that still wait on the phone: everything not yet in the register. */
export const isPending = (op: QueuedOp) => op.status !== 'applied';
