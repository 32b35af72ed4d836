/**
 * A Vite plugin for the client build: lists the built code the offline pages need in
 * `_app/offline-precache.json` — SvelteKit's entries, the root layout and error page, the
 * `/offline` route with the field pages it opens (sites, a site, a system, the checklist, a
 * certificate), everything those import, and their CSS. The service worker stores only these
 * scripts and styles at install (src/lib/offline/precache.ts); every other page's code needs
 * a connection anyway and is fetched when a page asks for it. scripts/precache-size.ts reads
 * the same list.
 */

export const OFFLINE_PRECACHE_FILE = '_app/offline-precache.json';

/** Source files whose chunks start the list, following their static and dynamic imports. */
const ROOTS = [
	/\/src\/routes\/offline\//,
	/\/src\/routes\/\+layout\.(svelte|ts)$/,
	/\/src\/routes\/\+error\.svelte$/
];
const ENTRY = /^_app\/immutable\/entry\/(start|app)\./;

/** @returns {import('vite').Plugin} */
export function offlinePrecache() {
	return {
		name: 'packledger-offline-precache',
		apply: 'build',
		generateBundle(_options, bundle) {
			/** @type {import('rolldown').OutputChunk[]} */
			const chunks = [];
			for (const o of Object.values(bundle)) if (o.type === 'chunk') chunks.push(o);
			const entries = chunks.filter((c) => c.isEntry && ENTRY.test(c.fileName));
			// Only the browser build has SvelteKit's client entries.
			if (!entries.length) return;
			const byName = new Map(chunks.map((c) => [c.fileName, c]));
			/** @type {Set<string>} */
			const keep = new Set();
			/** Chunks whose dynamic imports have been followed too. */
			const deepDone = new Set();
			/** @param {import('rolldown').OutputChunk | undefined} c @param {boolean} deep */
			const visit = (c, deep) => {
				// app.js's dynamic imports are every page of the app: never follow those.
				if (c && ENTRY.test(c.fileName)) deep = false;
				if (!c || (deep ? deepDone : keep).has(c.fileName)) return;
				keep.add(c.fileName);
				if (deep) deepDone.add(c.fileName);
				// Vite's CSS plugin records each chunk's styles here.
				const meta = /** @type {{ viteMetadata?: { importedCss: Set<string> } }} */ (c)
					.viteMetadata;
				for (const css of meta?.importedCss ?? []) keep.add(css);
				for (const i of c.imports) visit(byName.get(i), deep);
				// What the offline pages load later (the field pages, the checklist's schemas …).
				if (deep) for (const i of c.dynamicImports) visit(byName.get(i), true);
			};
			for (const c of entries) visit(c, false);
			for (const c of chunks)
				if (c.moduleIds.some((id) => ROOTS.some((r) => r.test(id)))) visit(c, true);
			this.emitFile({
				type: 'asset',
				fileName: OFFLINE_PRECACHE_FILE,
				source: JSON.stringify([...keep].sort().map((f) => `/${f}`))
			});
		}
	};
}
