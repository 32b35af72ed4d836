import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: {
		runes: ({ filename }) => (filename.split(/[/\\]/).includes('node_modules') ? undefined : true)
	},
	kit: {
		adapter: adapter(),
		/**
		 * Content-Security-Policy for every page. `mode: 'auto'` gives SvelteKit's own inline
		 * scripts a hash on prerendered pages and a nonce on the others, so they keep working
		 * with no 'unsafe-inline' for scripts. Styles keep 'unsafe-inline' (Svelte writes
		 * style attributes and transition styles). `frame-ancestors 'none'` stops other sites
		 * framing the register (clickjacking). Headers that are not CSP are set in
		 * src/lib/server/security-headers.ts.
		 */
		/**
		 * SvelteKit's cross-site form check runs before any hook, so it would refuse a test rig's
		 * multipart upload with a bearer token (no Origin). The same check, with that one
		 * exception, runs as the `originCheck` hook (src/lib/server/origin-check.ts).
		 */
		csrf: { trustedOrigins: ['*'] },
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self'],
				'connect-src': ['self'],
				'media-src': ['self', 'blob:'],
				'worker-src': ['self', 'blob:'],
				'object-src': ['none'],
				'base-uri': ['self'],
				'form-action': ['self'],
				'frame-ancestors': ['none']
			}
		},
		alias: { $domain: 'src/lib/domain' },
		// Absolute asset paths: the service worker serves one offline shell at every page's address.
		paths: { relative: false }
	}
};

export default config;
