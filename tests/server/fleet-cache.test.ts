import { describe, expect, it } from 'vitest';
import type { Db } from '$lib/server/db';
import { keepPage, keptPage, viewCacheAt } from '$lib/server/services/fleet-cache';

// The stores are keyed by the database handle (a WeakMap): any object stands for one here.
const handle = () => ({}) as unknown as Db;

describe('kept fleet pages and values', () => {
	it('gives a page back only at the version it was kept at, and forgets other versions', () => {
		const db = handle();
		keepPage(db, 'a', '7', '{"a":1}');
		expect(keptPage(db, 'a', '7')).toBe('{"a":1}');
		expect(keptPage(db, 'a', '8')).toBeUndefined();
		keepPage(db, 'b', '8', '{"b":1}');
		// A page of version 8 was kept: version 7's pages are gone, even if asked at 7 again.
		expect(keptPage(db, 'a', '7')).toBeUndefined();
		expect(keptPage(db, 'b', '8')).toBe('{"b":1}');
		// No version (a libSQL server): nothing kept, nothing given.
		keepPage(db, 'c', null, '{}');
		expect(keptPage(db, 'c', null)).toBeUndefined();
	});

	it('keeps at most 400 pages and 16 M characters, the least recently kept going first', () => {
		const db = handle();
		for (let i = 0; i < 401; i++) keepPage(db, `p${i}`, '1', `{"i":${i}}`);
		expect(keptPage(db, 'p0', '1')).toBeUndefined();
		expect(keptPage(db, 'p1', '1')).toBeDefined();
		expect(keptPage(db, 'p400', '1')).toBeDefined();
		// 2 M characters is the largest page kept (an eighth of the bound); nine of them pass 16 M.
		const big = 'x'.repeat(2 * 1024 * 1024);
		for (let i = 0; i < 9; i++) keepPage(db, `big${i}`, '2', big);
		expect(keptPage(db, 'big0', '2')).toBeUndefined();
		expect(keptPage(db, 'big1', '2')).toBe(big);
		keepPage(db, 'huge', '2', big + 'x');
		expect(keptPage(db, 'huge', '2')).toBeUndefined();
	});

	it('bounds the kept values by characters: a long list of matching ids does not pile up', async () => {
		const db = handle();
		const list = 'i'.repeat(1024 * 1024); // 1 M characters: an eighth of the 8 M bound
		let computed = 0;
		const cache = viewCacheAt(db, '5');
		for (let i = 0; i < 9; i++) await cache(`matches|${i}`, async () => (computed++, list));
		expect(computed).toBe(9);
		// The first went past the bound; the last is still kept.
		await cache('matches|8', async () => (computed++, list));
		expect(computed).toBe(9);
		await cache('matches|0', async () => (computed++, list));
		expect(computed).toBe(10);
		// Another version computes again.
		await viewCacheAt(db, '6')('matches|8', async () => (computed++, list));
		expect(computed).toBe(11);
	});
});
