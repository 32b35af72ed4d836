import { fail, isRedirect, redirect } from '@sveltejs/kit';
import { AuthError } from '@auth/sveltekit';
import { signIn } from '$lib/server/auth';
import { allowAnonymous } from '$lib/server/auth/guards';
import { signInBlockedFor } from '$lib/server/auth/rate-limit';
import { signInSchema } from '$lib/schemas/auth';
import { parseForm } from '$lib/server/validation';
import { getDb } from '$lib/server/db';
import { safeNext } from '$lib/server/safe-redirect';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	const user = allowAnonymous(event);
	const next = safeNext(event.url.searchParams.get('next'), event.url.origin);
	if (user) redirect(303, next);
	return {
		next,
		done: event.url.searchParams.get('done')
	};
};

export const actions: Actions = {
	default: async (event) => {
		allowAnonymous(event);
		const parsed = await parseForm(signInSchema, event.request.clone());
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		const db = await getDb();
		const address = event.getClientAddress();
		const blocked = () => signInBlockedFor(db, parsed.data.email, address);
		const minutes = await blocked();
		if (minutes > 0) return tooMany(minutes, parsed.data.email);
		try {
			await signIn(event);
		} catch (e) {
			if (isRedirect(e)) {
				if (new URL(e.location, event.url).searchParams.get('error'))
					return failed(parsed.data.email, await blocked());
				throw e;
			}
			if (e instanceof AuthError) return failed(parsed.data.email, await blocked());
			throw e;
		}
	}
};

function tooMany(minutes: number, email: string) {
	console.warn('sign-in refused: too many attempts for this account or client');
	return fail(429, {
		message: `Too many failed attempts. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}, or reset your password.`,
		values: { email }
	});
}

/** A refused sign-in; when it was refused for the limit (another attempt may have used the last slot), say so. */
function failed(email: string, minutes: number) {
	if (minutes > 0) return tooMany(minutes, email);
	return fail(400, {
		message: 'That e-mail and password do not match an active account.',
		values: { email }
	});
}
