/**
 * The page side of the offline layer: who is signed in on the phone, how many changes wait,
 * sending them when the network is back, keeping the field pages the technician opens, and
 * The rune state the badge, the pages and the offline list share is in status-state.svelte.ts,
 * which every page loads; this module comes after the first paint. "Take offline" and clearing
 * the phone at sign-out are in ./site-pages, fetched when a control asks for them.
 */
import { parseFieldPath } from './routes';
import { allOps, setCurrentUser, userDb, isPending, type OfflineUser } from './store';
import type { SyncReport } from './sync';
import { offline, worksOffline } from './status-state.svelte';

export { offline, worksOffline };

export async function refreshCounts(): Promise<void> {
	if (!offline.user) return;
	const db = await userDb(offline.user.id);
	const ops = await allOps(db);
	db.close();
	offline.pending = ops.filter(isPending).length;
	offline.rejected = ops.filter((o) => o.status === 'rejected').length;
	offline.version++;
}

/** Sends what waits, if there is a network and nothing is being sent already. */
export async function runSync(): Promise<SyncReport | null> {
	if (!offline.user || offline.syncing || !navigator.onLine) return null;
	// The sending code is only fetched when something waits to be sent.
	if (offline.pending === 0) await refreshCounts();
	if (offline.pending === 0) return null;
	offline.syncing = true;
	try {
		const { syncNow } = await import('./sync');
		const db = await userDb(offline.user.id);
		const report = await syncNow(db);
		db.close();
		if (report.sent || report.error) offline.last = report;
		return report;
	} finally {
		offline.syncing = false;
		await refreshCounts();
	}
}

/**
 * Lets the service worker keep the offline shell's layout data, once it is in control (the
 * answer is read to the end, so the page's network goes quiet).
 */
export async function warmShell(): Promise<void> {
	try {
		if (!navigator.serviceWorker) return;
		await navigator.serviceWorker.ready;
		await (await fetch('/offline/__data.json')).arrayBuffer();
	} catch {
		/* no network: the copy kept earlier stands */
	}
}

// Settles when the latest start has; before the first start, when that one has. A page's
// first load calls keepPage before the layout has said who is signed in.
let firstStarted: () => void = () => {};
let starting: Promise<void> = new Promise((r) => (firstStarted = r));

/** Called by the root layout with the signed-in user (or null). */
export function startOffline(user: OfflineUser | null): Promise<void> {
	starting = start(user).finally(firstStarted);
	return starting;
}

async function start(user: OfflineUser | null): Promise<void> {
	offline.online = navigator.onLine;
	if (!user || !worksOffline(user.role)) {
		offline.user = null;
		return;
	}
	if (offline.user?.id !== user.id) {
		await setCurrentUser(user);
		offline.user = user;
		// The offline shell's layout data (this user's name and role), for opening pages offline.
		if (navigator.onLine) void warmShell();
	}
	await refreshCounts();
	void runSync();
}

/** Keeps the data of a field page the technician opened online, so it opens offline too. */
export async function keepPage(pathname: string, data: Record<string, unknown>): Promise<void> {
	await starting.catch(() => undefined);
	if (!offline.user || !parseFieldPath(pathname) || pathname.startsWith('/offline')) return;
	const db = await userDb(offline.user.id);
	const old = await db.get('pages', pathname);
	await db.put('pages', { path: pathname, data, savedAt: Date.now(), siteId: old?.siteId });
	db.close();
}
