/**
 * The offline layer's shared rune state, on its own so the badge in every page's header can
 * read it without loading IndexedDB and the rest of the layer (status.svelte.ts), which the
 * root layout fetches after the page has painted.
 */
import type { OfflineUser } from './store';
import type { SyncReport } from './sync';

/** Roles that work on site; other people's pages are not kept on the phone. */
const FIELD_ROLES = new Set(['field_tech', 'admin']);

class OfflineStatus {
	user = $state<OfflineUser | null>(null);
	/** Changes on the phone not yet in the register (waiting, blocked or rejected). */
	pending = $state(0);
	/** Of those, the ones the register refused: they wait for the technician's choice. */
	rejected = $state(0);
	online = $state(true);
	syncing = $state(false);
	last = $state<SyncReport | null>(null);
	/** Bumped after every change to the queue, so pages that list it read it again. */
	version = $state(0);
}
export const offline = new OfflineStatus();

export const worksOffline = (role: string | undefined) => !!role && FIELD_ROLES.has(role);

/**
 * The rest of the layer (IndexedDB, kept pages, sending), fetched once, when first asked for:
 * by the root layout after the first paint, or by a control that needs it.
 */
let layer: Promise<typeof import('./status.svelte')> | null = null;
export const offlineLayer = () => (layer ??= import('./status.svelte'));
