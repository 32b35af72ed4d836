/**
 * Failed sign-ins are limited per account and per client address, in memory
 * (one process; a restart forgets). A success clears the account's count.
 */
const WINDOW_MS = 15 * 60 * 1000;
export const MAX_FAILURES_PER_ACCOUNT = 5;
export const MAX_FAILURES_PER_ADDRESS = 20;

const failures = new Map<string, number[]>();

function recent(key: string, now: number): number[] {
	const list = (failures.get(key) ?? []).filter((t) => now - t < WINDOW_MS);
	if (list.length) failures.set(key, list);
	else failures.delete(key);
	return list;
}

/** Minutes until another attempt is allowed, or 0 when it is allowed now. */
export function signInBlockedFor(email: string, address: string, now = Date.now()): number {
	const acc = recent(`acct:${email.toLowerCase()}`, now);
	const addr = recent(`addr:${address}`, now);
	const blocked: number[] = [];
	if (acc.length >= MAX_FAILURES_PER_ACCOUNT)
		blocked.push(acc[acc.length - MAX_FAILURES_PER_ACCOUNT]);
	if (addr.length >= MAX_FAILURES_PER_ADDRESS)
		blocked.push(addr[addr.length - MAX_FAILURES_PER_ADDRESS]);
	if (!blocked.length) return 0;
	const until = Math.max(...blocked) + WINDOW_MS;
	return Math.max(1, Math.ceil((until - now) / 60000));
}

export function recordSignInFailure(email: string, address: string, now = Date.now()): void {
	for (const key of [`acct:${email.toLowerCase()}`, `addr:${address}`]) {
		const list = recent(key, now);
		list.push(now);
		failures.set(key, list);
	}
}

export function clearSignInFailures(email: string): void {
	failures.delete(`acct:${email.toLowerCase()}`);
}

export function resetRateLimits(): void {
	failures.clear();
}
