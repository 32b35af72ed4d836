import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { returnActionSchema } from '$lib/schemas/returns';
import { parseForm } from '$lib/server/validation';
import { actOnReturn, findReturn, listOpenReturns } from '$lib/server/services/returns';
import { AppError } from '$lib/server/errors';
import { baseUrl } from '$lib/server/base-url';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'handleReturn');
	const db = await getDb();
	const scan = event.url.searchParams.get('scan')?.slice(0, 500) ?? null;
	let target = null;
	let scanError: string | null = null;
	if (scan) {
		try {
			target = await findReturn(db, actor, scan, baseUrl(event.url));
		} catch (e) {
			if (!(e instanceof AppError)) throw e;
			scanError = e.message;
		}
	}
	return { scan, target, scanError, open: await listOpenReturns(db, actor) };
};

const stepSchema = z.intersection(
	z.object({ serial: z.string().trim().min(1).max(300) }),
	returnActionSchema
);

export const actions: Actions = {
	step: async (event) => {
		const actor = requireCan(event, 'handleReturn');
		const parsed = await parseForm(stepSchema, event.request);
		if (!parsed.ok) return fail(400, { message: parsed.issues[0].message, issues: parsed.issues });
		const { serial, ...input } = parsed.data;
		try {
			return { done: await actOnReturn(await getDb(), actor, serial, input) };
		} catch (e) {
			return failFrom(e);
		}
	}
};
