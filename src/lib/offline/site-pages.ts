/**
 * The offline layer's on-demand parts: "take offline" (a site's pages fetched now and kept on
 * the phone), whether a site is kept, and clearing the phone before signing out. Fetched by the
 * control that needs them (take-offline.svelte, the app shell's sign-out), not with every field
 * page: the rest of the layer is in status.svelte.ts.
 */
import { parse } from 'devalue';
import { allOps, openCurrent, userDb, wipeUser, isPending } from './store';
import { offline } from './status-state.svelte';
import { warmShell } from './status.svelte';

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
