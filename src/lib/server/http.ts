import { error, fail, json } from '@sveltejs/kit';
import { AppError } from '$lib/server/errors';

/** Turns a service's typed error into a form failure; anything else is rethrown (a 500 with a log). */
export function failFrom(e: unknown, values: Record<string, unknown> = {}) {
	if (e instanceof AppError)
		return fail(e.status, { message: e.message, issues: e.issues ?? [], values });
	throw e;
}

/** Turns a service's typed error into a JSON answer for API routes. */
export function jsonFrom(e: unknown) {
	if (e instanceof AppError)
		return json({ message: e.message, issues: e.issues ?? [] }, { status: e.status });
	throw e;
}

/** Turns a service's typed error into SvelteKit's error page in a load. */
export function errorFrom(e: unknown): never {
	if (e instanceof AppError) error(e.status, e.message);
	throw e;
}
