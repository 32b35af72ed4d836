/** The public address links and QR codes point at: PUBLIC_BASE_URL, else ORIGIN, else the request's own origin. */
export function baseUrl(url: URL): string {
	const configured = process.env.PUBLIC_BASE_URL || process.env.ORIGIN;
	return (configured || url.origin).replace(/\/+$/, '');
}

/**
 * The public address for links in messages sent without a request at hand (e-mails from
 * services): PUBLIC_BASE_URL, else ORIGIN, else the local address `npm run dev` or `node build`
 * listens on.
 */
export function configuredBaseUrl(): string {
	const configured = process.env.PUBLIC_BASE_URL || process.env.ORIGIN;
	return (configured || `http://localhost:${process.env.PORT || 5173}`).replace(/\/+$/, '');
}

/** The absolute address of a record's page, from its path (`/claims/12`). */
export function recordUrl(path: string): string {
	return configuredBaseUrl() + (path.startsWith('/') ? path : `/${path}`);
}
