/** The public address links and QR codes point at: PUBLIC_BASE_URL, else ORIGIN, else the request's own origin. */
export function baseUrl(url: URL): string {
	const configured = process.env.PUBLIC_BASE_URL || process.env.ORIGIN;
	return (configured || url.origin).replace(/\/+$/, '');
}
