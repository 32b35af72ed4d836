import { error, fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { AppError } from '$lib/server/errors';
import { passwordSchema } from '$lib/schemas/auth';
import { parseForm } from '$lib/server/validation';
import { checkToken, redeemToken } from '$lib/server/services/account-links';

/** Shared load and action of the two one-time-link pages (invitation and reset). */
export async function loadToken(
	event: RequestEvent<{ token: string }>,
	purpose: 'invite' | 'reset'
) {
	try {
		const row = await checkToken(await getDb(), event.params.token, purpose);
		return { email: row.email };
	} catch (e) {
		if (e instanceof AppError) error(e.status === 404 ? 404 : 410, e.message);
		throw e;
	}
}

export async function spendToken(
	event: RequestEvent<{ token: string }>,
	purpose: 'invite' | 'reset'
) {
	const parsed = await parseForm(passwordSchema, event.request);
	if (!parsed.ok) return fail(400, { issues: parsed.issues });
	try {
		await redeemToken(await getDb(), event.params.token, purpose, parsed.data.password);
	} catch (e) {
		if (e instanceof AppError) return fail(e.status, { message: e.message });
		throw e;
	}
	redirect(303, '/signin?done=password');
}
