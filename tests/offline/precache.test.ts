import { describe, expect, it } from 'vitest';
import { precached } from '$lib/offline/precache';

// What the service worker stores at install: the offline pages' code (the build's list) and
// the static files; another page's code waits for first use.
describe('precached', () => {
	const code = new Set(['/_app/immutable/entry/start.A1.js', '/_app/immutable/nodes/7.B2.js']);

	it('stores the code on the offline list and none other', () => {
		expect(precached('/_app/immutable/entry/start.A1.js', code)).toBe(true);
		expect(precached('/_app/immutable/nodes/7.B2.js', code)).toBe(true);
		expect(precached('/_app/immutable/nodes/12.C3.js', code)).toBe(false);
		expect(precached('/_app/immutable/assets/12.D4.css', code)).toBe(false);
	});

	it('stores static files and images whatever the list says', () => {
		expect(precached('/manifest.webmanifest', code)).toBe(true);
		expect(precached('/icon-192.png', code)).toBe(true);
	});

	it('stores Latin .woff2 subsets only, and no legacy .woff', () => {
		const font = '/_app/immutable/assets/ibm-plex-sans-latin-400-normal.X.woff2';
		expect(precached(font, code)).toBe(true);
		expect(precached(font.replace('-latin-', '-cyrillic-'), code)).toBe(false);
		expect(precached(font.replace('.woff2', '.woff'), code)).toBe(false);
	});

	it('stores all code when the build list could not be read', () => {
		expect(precached('/_app/immutable/nodes/12.C3.js', null)).toBe(true);
	});
});
