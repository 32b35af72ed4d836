import { dataVersion, type Db } from '$lib/server/db';

/**
 * Values of the fleet's views (counts, per-value groups, the order of models and dealers)
 * kept until the data may have changed. The version is PRAGMA data_version on the reader
 * connection (`dataVersion`), which changes with every commit by any connection: this
 * process's own and another app server's on the same file alike. Through a libSQL server
 * there is no version, and nothing is kept.
 */
const kept = new WeakMap<Db, Map<string, { version: string; value: unknown }>>();
const MAX_KEPT = 500;

export type ViewCache = <T>(key: string, compute: () => Promise<T>) => Promise<T>;

/** Thrown by a `keptValues` cache that lacks a value: the caller goes the probing way. */
export class NotKept extends Error {}

function valuesOf(db: Db) {
	let map = kept.get(db);
	if (!map) kept.set(db, (map = new Map()));
	return map;
}

/**
 * A cache for one request that reads the version first: every value it gives is of that
 * version, or computed now (after the version was read, so a commit in between only costs a
 * second count on the next request).
 */
export async function viewCache(db: Db): Promise<ViewCache> {
	const version = await dataVersion(db);
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

/**
 * A cache that gives kept values without reading the version (throwing NotKept for a value it
 * lacks) and remembers their versions: the request's last statement reads the data version
 * in the same snapshot as the page, and `allOf(version)` says whether every value used was of
 * it. One statement fewer per request, and the check is as strict.
 */
export function keptValues(db: Db): { cache: ViewCache; allOf: (version: unknown) => boolean } {
	const values = valuesOf(db);
	const used = new Set<string>();
	return {
		cache: async <T>(key: string) => {
			const hit = values.get(key);
			if (!hit) throw new NotKept(key);
			used.add(hit.version);
			return hit.value as T;
		},
		allOf: (version) => version !== null && [...used].every((v) => v === String(version))
	};
}
