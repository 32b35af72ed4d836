import { dataVersion, type Db } from '$lib/server/db';

/**
 * Values of the fleet's views (counts, per-value groups, the order of models and dealers, the
 * ids a text inside a serial matches, and whole answered pages) kept until the data may have
 * changed. The version is PRAGMA data_version on the reader connection (`dataVersion`), which
 * changes with every commit by any connection: this process's own and another app server's on
 * the same file alike. Through a libSQL server there is no version, and nothing is kept.
 *
 * A request reads the version first and everything after it: a value computed then is of that
 * version or newer, so keeping it under the version read first is safe either way (a newer
 * value kept under an older version is never given out: by then the version has moved on).
 *
 * Each kind is one store of one version: values of another version are never given out
 * again, so they go as soon as a value of a new version is kept (a slow request of an older
 * version may empty the store once: it refills at the next request). Both stores are
 * bounded by entries and by characters (a text that matches every serial is a list of
 * 200,000 ids, ~1.4 MB), the least recently kept going first.
 */
type Store = {
	version: string;
	map: Map<string, { value: unknown; chars: number }>;
	chars: number;
};

class VersionedStore {
	readonly #stores = new WeakMap<Db, Store>();
	constructor(
		readonly maxEntries: number,
		readonly maxChars: number
	) {}

	get(db: Db, version: string | null, key: string): { value: unknown } | undefined {
		if (version === null) return undefined;
		const s = this.#stores.get(db);
		return s && s.version === version ? s.map.get(key) : undefined;
	}

	set(db: Db, version: string | null, key: string, value: unknown, chars: number): void {
		if (version === null || chars > this.maxChars / 8) return;
		let s = this.#stores.get(db);
		if (!s || s.version !== version)
			this.#stores.set(db, (s = { version, map: new Map(), chars: 0 }));
		const old = s.map.get(key);
		if (old) {
			s.chars -= old.chars;
			s.map.delete(key);
		}
		s.map.set(key, { value, chars });
		s.chars += chars;
		while (s.map.size > this.maxEntries || s.chars > this.maxChars) {
			const [first, entry] = s.map.entries().next().value!;
			s.map.delete(first);
			s.chars -= entry.chars;
		}
	}
}

/** Counts, groups, orders, match lists and ordered ids of a few matches: 500 of them, 8 M characters in all. */
const values = new VersionedStore(500, 8 * 1024 * 1024);
/** Answered pages: 400 of them, 16 M characters of JSON in all. */
const pages = new VersionedStore(400, 16 * 1024 * 1024);

/**
 * The characters a kept value holds: strings by length, a list of ids as its JSON would be
 * (8 characters an id: a 200,000-module register's ids are up to 6 digits and a comma),
 * anything else as a small value.
 */
const charsOf = (v: unknown) =>
	typeof v === 'string' ? v.length : Array.isArray(v) ? 64 + v.length * 8 : 64;

export type ViewCache = <T>(key: string, compute: () => Promise<T>) => Promise<T>;

/** A cache for one request at the data version read first (`version`, from `dataVersion`). */
export function viewCacheAt(db: Db, version: string | null): ViewCache {
	return async <T>(key: string, compute: () => Promise<T>): Promise<T> => {
		const hit = values.get(db, version, key);
		if (hit) return hit.value as T;
		const value = await compute();
		values.set(db, version, key, value, charsOf(value));
		return value;
	};
}

/** `viewCacheAt` at the version read now. */
export async function viewCache(db: Db): Promise<ViewCache> {
	return viewCacheAt(db, await dataVersion(db));
}

/** A page answered at `version` (the same version, the same answer), or undefined. */
export function keptPage(db: Db, key: string, version: string | null): string | undefined {
	return pages.get(db, version, key)?.value as string | undefined;
}

/** Keeps a page answered at `version`; the least recently kept go first past the bounds. */
export function keepPage(db: Db, key: string, version: string | null, json: string): void {
	pages.set(db, version, key, json, json.length);
}
