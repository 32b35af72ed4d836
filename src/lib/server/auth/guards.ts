import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { hasRole, ROLE_LABELS, type RoleName } from '$lib/roles';
import type { Actor } from '$lib/server/actor';

type Event = Pick<RequestEvent, 'locals' | 'url'>;

function isApi(url: URL) {
	return url.pathname.startsWith('/api/');
}

/** The signed-in user; a page request without one goes to sign-in, an API request gets 401. */
export function requireUser(event: Event): Actor {
	const user = event.locals.user;
	if (user) return user;
	const token = event.locals.token;
	if (token)
		error(
			'error' in token ? 401 : 403,
			'error' in token ? token.error : 'This API token may only send factory test imports.'
		);
	if (isApi(event.url))
		error(401, 'Sign in first: this request carries no valid session or token.');
	redirect(303, `/signin?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
}

/** The signed-in user if the role is one of `roles`; otherwise a 403 that says who may enter. */
export function requireRole(event: Event, ...roles: RoleName[]): Actor {
	const user = requireUser(event);
	if (!hasRole(user.role, roles)) {
		const who = roles.map((r) => ROLE_LABELS[r]).join(', ');
		error(
			403,
			`This area is for: ${who}. You are signed in as ${ROLE_LABELS[user.role as RoleName] ?? user.role}.`
		);
	}
	return user;
}

/** Marks a handler as deliberately public (checked by the guard-coverage test). */
export function allowAnonymous(event: Event): Actor | null {
	return event.locals.user ?? null;
}

/**
 * For API routes that test rigs may call: a valid token with the scope, or a signed-in
 * user with one of the roles. A revoked or unknown token is refused with 401 and the reason.
 */
export function requireApiActor(
	event: Event,
	opts: { roles: RoleName[]; tokenScope?: 'imports' }
): Actor {
	const token = event.locals.token;
	if (token) {
		if ('error' in token) error(401, token.error);
		if (token.scope !== opts.tokenScope)
			error(403, 'This API token may only send factory test imports.');
		return token.actor;
	}
	return requireRole(event, ...opts.roles);
}
