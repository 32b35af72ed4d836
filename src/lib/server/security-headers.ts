import type { Handle } from '@sveltejs/kit';

/**
 * Pages that read QR codes with the camera; only they may ask for it (Permissions Policy,
 * W3C Working Draft). Everything else denies camera, microphone and location outright.
 */
const CAMERA_PAGES = [
	/^\/bench\/?$/,
	/^\/shipments\/[1-9]\d{0,15}\/?$/,
	/^\/claims\/new\/?$/,
	/^\/claims\/[1-9]\d{0,15}\/?$/,
	/^\/systems\/[1-9]\d{0,15}\/?$/,
	// The offline shell: one copy, kept by the service worker, serves every field page offline
	// (placing modules by scanning among them), so its header is the one those pages get.
	/^\/offline(\/|$)/
];

export function usesCamera(pathname: string): boolean {
	// Paths are short; a very long one is not a scanning page (and no pattern runs on it).
	return pathname.length <= 64 && CAMERA_PAGES.some((p) => p.test(pathname));
}

/** HSTS only when the site is served over https (RFC 6797 §7.2: not sent over plain http). */
export function wantsHsts(origin = process.env.ORIGIN): boolean {
	return !!origin && origin.startsWith('https://');
}

/**
 * Headers every answer carries (OWASP Secure Headers Project): no MIME sniffing, a referrer
 * that stops at the origin for other sites, the camera only where it is used, no framing by
 * other sites (CSP frame-ancestors for pages comes from svelte.config.js; X-Frame-Options
 * covers API answers and older browsers), and HSTS when ORIGIN is https.
 */
export const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	const h = response.headers;
	const set = (name: string, value: string) => {
		if (!h.has(name)) h.set(name, value);
	};
	try {
		set('X-Content-Type-Options', 'nosniff');
		set('Referrer-Policy', 'strict-origin-when-cross-origin');
		set('X-Frame-Options', 'DENY');
		set(
			'Permissions-Policy',
			`camera=${usesCamera(event.url.pathname) ? '(self)' : '()'}, microphone=(), geolocation=(), payment=(), usb=()`
		);
		if (wantsHsts()) set('Strict-Transport-Security', 'max-age=31536000; includeSubDomains');
	} catch {
		// Some responses (a fetch passed straight through) have immutable headers.
	}
	return response;
};
