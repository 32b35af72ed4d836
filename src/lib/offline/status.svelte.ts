/**
 * The page side of the offline layer: who is signed in on the phone, how many changes wait,
 * sending them when the network is back, keeping the field pages the technician opens, and
 * "take offline". The rune state the badge, the pages and the offline list share is in
 * status-state.svelte.ts, which every page loads; this module comes after the first paint.
 */
import { parse } from 'devalue';
import { parseFieldPath } from './routes';
import {
	allOps,
	openCurrent,
	setCurrentUser,
	userDb,
	wipeUser,
	isPending,
	type OfflineUser
} from './store';
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
async function warmShell(): Promise<void> {
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

/**
 * "Take offline": every page of a site (the site, its new-system form, each system, its
 * checklist and certificate), the site list and the models, fetched now and kept on the phone.
 */
export async function takeSiteOffline(siteId: number): Promise<{ pages: number }> {
	if (!offline.user) throw new Error('Sign in as a field technician to take a site offline.');
	const res = await fetch(`/api/offline/sites/${siteId}`, {
		headers: { accept: 'application/json' }
	});
	if (!res.ok) {
		const body = await res.json().catch(() => ({}));
		throw new Error(body.message ?? `The register answered ${res.status}.`);
	}
	const pack = parse(await res.text()) as { pages: Record<string, Record<string, unknown>> };
	const db = await userDb(offline.user.id);
	const tx = db.transaction('pages', 'readwrite');
	const now = Date.now();
	for (const [path, data] of Object.entries(pack.pages))
		await tx.store.put({ path, data, savedAt: now, siteId });
	await tx.done;
	db.close();
	// Ask the browser to keep this origin's storage under pressure (Storage Standard §4.4
	// "persist()"): without it a full phone may clear the kept pages and the queue.
	void navigator.storage?.persist?.().catch(() => false);
	// The shell's layout data too, but never wait long for a service worker that is not there.
	await Promise.race([warmShell(), new Promise((r) => setTimeout(r, 5000))]);
	return { pages: Object.keys(pack.pages).length };
}

/** Whether a site's pages are on the phone. */
export async function isTakenOffline(siteId: number): Promise<boolean> {
	const current = await openCurrent();
	if (!current) return false;
	const page = await current.db.get('pages', `/sites/${siteId}`);
	current.db.close();
	return page?.siteId === siteId;
}

/**
 * Before signing out: this user's offline data leaves the phone. Unsent changes would be
 * lost, so the technician is asked first; false means stay signed in.
 */
export async function clearForSignOut(): Promise<boolean> {
	const current = await openCurrent();
	if (!current) return true;
	const unsent = (await allOps(current.db)).filter(isPending).length;
	current.db.close();
	if (
		unsent > 0 &&
		!confirm(
			`${unsent} change${unsent === 1 ? '' : 's'} made offline ${unsent === 1 ? 'has' : 'have'} not reached the register yet. Signing out deletes ${unsent === 1 ? 'it' : 'them'} from this phone. Sign out anyway?`
		)
	)
		return false;
	await wipeUser(current.user.id);
	offline.user = null;
	offline.pending = 0;
	return true;
}
