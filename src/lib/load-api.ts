/**
 * One GET of the register's own JSON API from a universal `load` (SvelteKit's `fetch`: on the
 * server it calls the route directly with the visitor's cookies; in the browser it is a normal
 * request, cancelled by SvelteKit when a newer navigation supersedes it). Never throws: the
 * answer is the body, or a message a person can act on.
 */
export async function loadFromApi<T>(
	fetch: typeof globalThis.fetch,
	path: string
): Promise<{ result: T | null; problem: string }> {
	try {
		const res = await fetch(path);
		const body = await res.json().catch(() => null);
		if (res.ok) return { result: body as T, problem: '' };
		if (res.status === 401)
			return {
				result: null,
				problem: 'Your session has ended. Sign in again, then come back to this page.'
			};
		return {
			result: null,
			problem:
				body?.message ?? `The register answered with error ${res.status}. Try again in a moment.`
		};
	} catch {
		return {
			result: null,
			problem: 'The register could not be reached. Check your connection, then try again.'
		};
	}
}
