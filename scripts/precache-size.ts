// What the service worker stores at install (see src/lib/offline/precache.ts), from the built
// client: file count, raw bytes, gzip (level 9) and brotli sizes — what a phone downloads once.
// Usage: npm run build && npx tsx --tsconfig tsconfig.scripts.json scripts/precache-size.ts [--json]
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { brotliCompressSync, gzipSync } from 'node:zlib';
import { OFFLINE_CODE_LIST, precached } from '../src/lib/offline/precache';

const root = 'build/client';
const walk = (d: string): string[] =>
	readdirSync(d).flatMap((n) =>
		statSync(join(d, n)).isDirectory() ? walk(join(d, n)) : [join(d, n)]
	);
const all = walk(root)
	.map((f) => '/' + relative(root, f))
	.filter((p) => !p.endsWith('.gz') && !p.endsWith('.br') && p !== '/service-worker.js');
const code = new Set<string>(JSON.parse(readFileSync(join(root, OFFLINE_CODE_LIST), 'utf8')));
const list = all.filter((p) => p !== OFFLINE_CODE_LIST && precached(p, code));
const sum = (files: string[], f: (b: Buffer) => number) =>
	files.reduce((a, p) => a + f(readFileSync(join(root, p))), 0);
const kb = (n: number) => Math.round(n / 1024);
const figures = {
	files: list.length,
	rawKB: kb(sum(list, (b) => b.length)),
	gzipKB: kb(sum(list, (b) => gzipSync(b, { level: 9 }).length)),
	brotliKB: kb(sum(list, (b) => brotliCompressSync(b).length)),
	allBuiltFiles: all.length,
	allBuiltRawKB: kb(sum(all, (b) => b.length)),
	serviceWorkerGzipKB: kb(
		gzipSync(readFileSync(join(root, 'service-worker.js')), { level: 9 }).length
	)
};
if (process.argv.includes('--json')) console.log(JSON.stringify(figures));
else
	console.log(
		`Precache: ${figures.files} files, ${figures.rawKB} KB raw, ${figures.gzipKB} KB gzip, ${figures.brotliKB} KB brotli ` +
			`(of ${figures.allBuiltFiles} built files, ${figures.allBuiltRawKB} KB raw); service worker ${figures.serviceWorkerGzipKB} KB gzip`
	);
