import { AsyncLocalStorage } from 'node:async_hooks';

/**
 * A request's place inside the admission gate (`admission.ts`), where code far from the hook
 * can give it up: a request about to wait for the database's one writer (`withWriteLock`)
 * lets the next request in instead of holding its place while it waits. Giving a place up
 * twice, or one never held, does nothing.
 */
export interface Place {
	leave(): void;
}

export const places = new AsyncLocalStorage<Place>();

/** Gives up the current request's place, if it holds one. */
export function leavePlace(): void {
	places.getStore()?.leave();
}
