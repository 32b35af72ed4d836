/**
 * The guards. Every load, action and `+server.ts` handler calls one of them as its first
 * statement (`tests/server/guard-coverage.test.ts` checks it, and which capability each route
 * names). What a capability lets whom do is in `$lib/policy`.
 */
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { can, rolesFor, type Capability } from '$lib/policy';
import { ROLE_LABELS, type RoleName } from '$lib/roles';
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

/** The signed-in user if their role holds the capability; otherwise a 403 that says who may. */
export function requireCan(event: Event, capability: Capability): Actor {
	const user = requireUser(event);
	if (!can(user.role, capability)) {
		const who = rolesFor(capability)
			.map((r) => ROLE_LABELS[r])
			.join(', ');
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
 * user whose role holds the capability. A revoked or unknown token is refused with 401 and
 * the reason.
 */
export function requireApiActor(
	event: Event,
	capability: Capability,
	opts: { tokenScope?: 'imports' } = {}
): Actor {
	const token = event.locals.token;
	if (token) {
		if ('error' in token) error(401, token.error);
		if (!opts.tokenScope || token.scope !== opts.tokenScope)
			error(403, 'This API token may only send factory test imports.');
		return token.actor;
	}
	return requireCan(event, capability);
}
