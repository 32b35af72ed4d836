import { AsyncLocalStorage } from 'node:async_hooks';

/** Per-request facts that Auth.js callbacks cannot see directly (the client's address). */
export const requestContext = new AsyncLocalStorage<{ clientAddress: string }>();

export function currentClientAddress(): string {
	return requestContext.getStore()?.clientAddress ?? 'unknown';
}
