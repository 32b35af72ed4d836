/**
 * The field pages that work without a network, by path. A record is named by its number,
 * or — for one made on the phone and not yet sent — by the id of the operation that made it.
 * Offline, each is shown under `/offline{path}` from what the phone keeps.
 */
import { isOperationId } from '$lib/offline/contract';

/** A record id (number) or the operation id (UUID) of a record made on the phone. */
export type Ref = number | string;

export type FieldRoute =
	| { kind: 'sites' }
	| { kind: 'newSite' }
	| { kind: 'site'; ref: Ref }
	| { kind: 'newSystem'; ref: Ref }
	| { kind: 'system'; ref: Ref }
	| { kind: 'commission'; ref: Ref }
	| { kind: 'certificate'; ref: Ref };

export const OFFLINE_PREFIX = '/offline';

const ID = /^[1-9]\d{0,15}$/;
function readRef(s: string | undefined): Ref | null {
	if (!s) return null;
	if (ID.test(s)) return Number(s);
	return isOperationId(s) ? s.toLowerCase() : null;
}

/** The field page a path shows (with or without the `/offline` prefix), or null for any other page. */
export function parseFieldPath(pathname: string): FieldRoute | null {
	let path = pathname.startsWith(OFFLINE_PREFIX + '/')
		? pathname.slice(OFFLINE_PREFIX.length)
		: pathname;
	if (path.length > 1 && path.endsWith('/')) path = path.slice(0, -1);
	const parts = path.split('/').slice(1);
	if (parts.length > 4) return null;
	const [a, b, c, d] = parts;
	if (a === 'sites') {
		if (b === undefined) return { kind: 'sites' };
		if (b === 'new' && c === undefined) return { kind: 'newSite' };
		const ref = readRef(b);
		if (ref === null) return null;
		if (c === undefined) return { kind: 'site', ref };
		if (c === 'systems' && d === 'new') return { kind: 'newSystem', ref };
		return null;
	}
	if (a === 'systems' && d === undefined) {
		const ref = readRef(b);
		if (ref === null) return null;
		if (c === undefined) return { kind: 'system', ref };
		if (c === 'commission') return { kind: 'commission', ref };
		return null;
	}
	if (a === 'commissionings' && c === undefined) {
		const ref = readRef(b);
		return ref === null ? null : { kind: 'certificate', ref };
	}
	return null;
}

/** The page's own path (no `/offline`), as the register names it. */
export function fieldPath(route: FieldRoute): string {
	switch (route.kind) {
		case 'sites':
			return '/sites';
		case 'newSite':
			return '/sites/new';
		case 'site':
			return `/sites/${route.ref}`;
		case 'newSystem':
			return `/sites/${route.ref}/systems/new`;
		case 'system':
			return `/systems/${route.ref}`;
		case 'commission':
			return `/systems/${route.ref}/commission`;
		case 'certificate':
			return `/commissionings/${route.ref}`;
	}
}

/** True when the route names a record made on the phone (only the phone can show it). */
export const isLocalRoute = (route: FieldRoute) => 'ref' in route && typeof route.ref === 'string';
