import { dataVersion, type Db } from '$lib/server/db';

/**
 * Values of the fleet's views (counts, per-value groups, the order of models and dealers, and
 * whole answered pages) kept until the data may have changed. The version is PRAGMA
 * data_version on the reader connection (`dataVersion`), which changes with every commit by
 * any connection: this process's own and another app server's on the same file alike. Through
 * a libSQL server there is no version, and nothing is kept.
 *
 * A request reads the version first and everything after it: a value computed then is of that
 * version or newer, so keeping it under the version read first is safe either way (a newer
 * value kept under an older version is never given out: by then the version has moved on).
 */
type Entry = { version: string; value: unknown };
const kept = new WeakMap<Db, Map<string, Entry>>();
const MAX_KEPT = 500;

/** Answered pages: at most this many, and this many characters of JSON in all. */
const MAX_PAGES = 400;
const MAX_PAGE_CHARS = 16 * 1024 * 1024;
const pages = new WeakMap<
	Db,
	{ version: string; map: Map<string, Entry & { value: string }>; chars: number }
>();

export type ViewCache = <T>(key: string, compute: () => Promise<T>) => Promise<T>;

function valuesOf(db: Db) {
	let map = kept.get(db);
	if (!map) kept.set(db, (map = new Map()));
	return map;
}

/** A cache for one request at the data version read first (`version`, from `dataVersion`). */
export function viewCacheAt(db: Db, version: string | null): ViewCache {
	const values = valuesOf(db);
	return async <T>(key: string, compute: () => Promise<T>): Promise<T> => {
		const hit = version === null ? undefined : values.get(key);
		if (hit && hit.version === version) return hit.value as T;
		const value = await compute();
		if (version !== null) {
			values.delete(key);
			values.set(key, { version, value });
			while (values.size > MAX_KEPT) values.delete(values.keys().next().value!);
		}
		return value;
	};
}

/** `viewCacheAt` at the version read now. */
export async function viewCache(db: Db): Promise<ViewCache> {
	return viewCacheAt(db, await dataVersion(db));
}

/** A page answered at `version` (the same version, the same answer), or undefined. */
export function keptPage(db: Db, key: string, version: string | null): string | undefined {
	if (version === null) return undefined;
	const hit = pages.get(db)?.map.get(key);
	return hit && hit.version === version ? hit.value : undefined;
}

/** Keeps a page answered at `version`; the least recently kept go first past the bounds. */
export function keepPage(db: Db, key: string, version: string | null, json: string): void {
	if (version === null || json.length > MAX_PAGE_CHARS / 8) return;
	let store = pages.get(db);
	// Pages of another version will not be given out again: they go at once.
	if (!store || store.version !== version)
		pages.set(db, (store = { version, map: new Map(), chars: 0 }));
	const old = store.map.get(key);
	if (old) {
		store.chars -= old.value.length;
		store.map.delete(key);
	}
	store.map.set(key, { version, value: json });
	store.chars += json.length;
	while (store.map.size > MAX_PAGES || store.chars > MAX_PAGE_CHARS) {
		const [first, entry] = store.map.entries().next().value!;
		store.map.delete(first);
		store.chars -= entry.value.length;
	}
}
