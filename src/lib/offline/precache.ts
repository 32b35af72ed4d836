/**
 * Which built files the service worker stores at install, before any page needs them.
 * Everything else under `/_app/immutable/` is stored the first time a page fetches it (those
 * files never change under a name, and hold no one's data). Left out of the install: the
 * legacy `.woff` fonts (every phone browser in use reads `.woff2`) and font subsets other than
 * Latin, which a page only fetches when it shows such characters.
 */
export function precached(path: string): boolean {
	if (path.endsWith('.woff')) return false;
	if (path.endsWith('.woff2')) return /-latin-\d{3}-/.test(path);
	return true;
}
