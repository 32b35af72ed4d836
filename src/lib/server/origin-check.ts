import { json, text, type Handle } from '@sveltejs/kit';
import { SESSION_COOKIES } from '$lib/server/auth';

const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);
/** Content types a browser form on another site can send without a preflight (plus SvelteKit's own). */
const FORM_TYPES = [
	'application/x-www-form-urlencoded',
	'multipart/form-data',
	'text/plain',
	'application/x-sveltekit-formdata'
];

function isFormType(request: Request): boolean {
	const type = request.headers.get('content-type')?.split(';', 1)[0].trim().toLowerCase() ?? '';
	return FORM_TYPES.includes(type);
}

/**
 * A request that proves itself with a bearer token on the API and brings no session cookie
 * carries no ambient credential: a page on another site cannot make a browser add an
 * Authorization header without a CORS preflight, which this app never grants.
 */
function bearerOnly(request: Request, url: URL, cookieHeader: string | null): boolean {
	if (!url.pathname.startsWith('/api/')) return false;
	if (!/^Bearer \S/.test(request.headers.get('authorization')?.slice(0, 8) ?? '')) return false;
	const cookies = (cookieHeader ?? '').split(';').map((c) => c.split('=', 1)[0].trim());
	return !cookies.some((name) =>
		SESSION_COOKIES.some((s) => name === s || name.startsWith(`${s}.`))
	);
}

/**
 * SvelteKit's own cross-site form check (switched off in svelte.config.js with
 * `csrf.trustedOrigins: ['*']`, because it runs before any hook and so refuses a test rig's
 * `curl -F file=@results.csv` with a bearer token, which sends no Origin). This is the same
 * check — an unsafe method with a form content type must come with this site's Origin, and
 * no origin is trusted besides it — except for requests that carry a bearer token and no
 * session cookie (OWASP CSRF Prevention Cheat Sheet, "Verifying Origin With Standard Headers").
 */
export const originCheck: Handle = ({ event, resolve }) => {
	const { request, url } = event;
	if (
		UNSAFE.has(request.method) &&
		isFormType(request) &&
		request.headers.get('origin') !== url.origin &&
		!bearerOnly(request, url, request.headers.get('cookie'))
	) {
		const message = `Cross-site ${request.method} form submissions are forbidden`;
		return request.headers.get('accept') === 'application/json'
			? json({ message }, { status: 403 })
			: text(message, { status: 403 });
	}
	return resolve(event);
};
