import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';
import { offlinePrecache } from './scripts/lib/offline-precache.js';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit(), offlinePrecache()],
	test: {
		environment: 'node',
		include: ['tests/**/*.test.ts', 'src/**/*.test.ts'],
		testTimeout: 20000
	}
});
