import type { Handle } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { requestContext } from '$lib/server/request-context';
import type { Actor } from '$lib/server/actor';
import { verifyToken } from '$lib/server/services/tokens';
import { findActor } from '$lib/server/services/actors';

/** Makes the client's address visible to Auth.js's authorize (for rate limiting). */
export const contextHandle: Handle = ({ event, resolve }) =>
	requestContext.run({ clientAddress: safeAddress(event) }, () => resolve(event));

function safeAddress(event: Parameters<Handle>[0]['event']): string {
	try {
		return event.getClientAddress();
	} catch {
		return 'unknown';
	}
}

/**
 * Turns the session into an Actor, re-reading the user so that a deactivated
 * account or a changed role takes effect at once, not when the token expires.
 */
export const actorHandle: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	event.locals.token = null;
	const authz = event.request.headers.get('authorization');
	if (authz?.startsWith('Bearer ') && event.url.pathname.startsWith('/api/')) {
		event.locals.token = await verifyToken(await getDb(), authz.slice(7).trim());
	} else if (!event.url.pathname.startsWith('/auth/')) {
		const session = await sessionOf(event);
		if (session) {
			const actor = await loadActor(session.userId);
			// A token issued before sign-out, a password reset, a role or organisation change
			// or a deactivation carries an older session version: it no longer signs anyone in.
			if (actor && actor.sessionVersion === session.sessionVersion) event.locals.user = actor;
		}
	}
	return resolve(event);
};

/**
 * Decoding the session token (Auth.js decrypts a JWE and re-issues the cookie) costs a few
 * milliseconds, as much as a fleet query. What a token says is remembered for a minute; the
 * user row (with its session version) is still read on every request, so sign-out, a
 * deactivated account or a changed role takes effect at once.
 */
const SESSION_CACHE_MS = 60_000;
const sessionCache = new Map<string, { userId: number; sessionVersion: number; at: number }>();

async function sessionOf(
	event: Parameters<Handle>[0]['event']
): Promise<{ userId: number; sessionVersion: number } | null> {
	const token =
		event.cookies.get('__Secure-authjs.session-token') ?? event.cookies.get('authjs.session-token');
	if (!token) return null;
	const hit = sessionCache.get(token);
	if (hit && Date.now() - hit.at < SESSION_CACHE_MS) return hit;
	const session = await event.locals.auth();
	const user = session?.user as { id?: unknown; sessionVersion?: unknown } | undefined;
	const id = Number(user?.id);
	const sessionVersion = Number(user?.sessionVersion);
	if (!Number.isInteger(id) || id <= 0 || !Number.isInteger(sessionVersion)) return null;
	if (sessionCache.size > 5000) sessionCache.clear();
	const entry = { userId: id, sessionVersion, at: Date.now() };
	sessionCache.set(token, entry);
	return entry;
}

export async function loadActor(userId: number): Promise<Actor | null> {
	return findActor(await getDb(), { id: userId });
}

/** Refuses to start without AUTH_SECRET rather than answering every page with 500. */
export function assertAuthSecret(): void {
	if (!process.env.AUTH_SECRET || process.env.AUTH_SECRET.length < 16) {
		console.error(
			'\nPackledger cannot start: AUTH_SECRET is not set (or shorter than 16 characters).\n' +
				'Set it to a long random value, e.g.  AUTH_SECRET=$(openssl rand -base64 33) node build\n' +
				'(`npm run demo` makes one for you in data/.auth-secret.)\n'
		);
		process.exit(1);
	}
}
