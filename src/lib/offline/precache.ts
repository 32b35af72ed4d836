/**
 * Which built files the service worker stores at install, before any page needs them.
 * Scripts and styles under `/_app/immutable/` are stored at install only when the offline
 * pages need them (`offlineCode`, the list the build writes to `_app/offline-precache.json`,
 * see scripts/lib/offline-precache.ts): the other pages answer offline that they need a
 * connection, so their code would be downloaded for nothing. Those files are stored the first
 * time a page fetches them instead (they never change under a name, and hold no one's data).
 * Also left out of the install: the legacy `.woff` fonts (every phone browser in use reads
 * `.woff2`) and font subsets other than Latin, which a page only fetches when it shows such
 * characters. Without a list (`null`), all code is stored.
 */
export function precached(path: string, offlineCode: ReadonlySet<string> | null): boolean {
	if (path.endsWith('.woff')) return false;
	if (path.endsWith('.woff2')) return /-latin-\d{3}-/.test(path);
	if (offlineCode && path.startsWith('/_app/immutable/') && /\.(js|css)$/.test(path))
		return offlineCode.has(path);
	return true;
}

/** Where the build lists the offline pages' code (emitted by scripts/lib/offline-precache.ts). */
export const OFFLINE_CODE_LIST = '/_app/offline-precache.json';
