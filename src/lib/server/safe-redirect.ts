/**
 * Where to go after sign-in: a path on this site, or `/`. The value is read as a URL against
 * the site's own origin and kept only when it stays on that origin, so `/\evil.example`,
 * `/%09/evil.example`, `//evil.example` and `https://evil.example` all become `/` (browsers
 * turn a backslash into a slash and drop tabs and newlines: WHATWG URL Standard, "URL
 * parsing"; OWASP Unvalidated Redirects and Forwards Cheat Sheet).
 */
export function safeNext(value: unknown, origin: string): string {
	if (typeof value !== 'string' || value === '' || value.length > 2000) return '/';
	if (!value.startsWith('/')) return '/';
	let url: URL;
	try {
		url = new URL(value, origin);
	} catch {
		return '/';
	}
	if (url.origin !== new URL(origin).origin) return '/';
	const path = url.pathname + url.search + url.hash;
	// A path that itself begins with two slashes (or a backslash) would be read as a host again.
	if (path.startsWith('//') || path.startsWith('/\\')) return '/';
	return path;
}
