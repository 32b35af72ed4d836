import { fail } from '@sveltejs/kit';
import { version } from '$app/environment';
import { allowAnonymous, requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getModuleRecord, getPublicRecord, publicRecordEtag } from '$lib/server/services/modules';
import { correctBuild, reworkModule, scrapModule } from '$lib/server/services/workshop';
import { correctBuildSchema, reworkSchema, scrapSchema } from '$lib/schemas/workshop';
import { NotFoundError } from '$lib/server/errors';
import { errorFrom, failFrom } from '$lib/server/http';
import { parseForm } from '$lib/server/validation';
import { businessDay } from '$lib/server/services/calendar';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = allowAnonymous(event);
	const db = await getDb();
	const today = await businessDay(db, new Date());
	try {
		const publicRecord = await getPublicRecord(db, event.params.serial, today);
		// Signed-in people who may see the module get its full record; everyone else the public one.
		const full = user
			? await getModuleRecord(db, user, publicRecord.identifier).catch((e) =>
					e instanceof NotFoundError ? null : Promise.reject(e)
				)
			: null;
		// Without a session the page is the same for everyone: a validator, so a rescan of the
		// label (or a proxy) revalidates with If-None-Match and gets 304 (see src/lib/server/public-page.ts).
		if (!user)
			event.setHeaders({
				etag: publicRecordEtag(publicRecord, version),
				'cache-control': 'public, no-cache',
				vary: 'Cookie'
			});
		return { publicRecord, full, role: user?.role ?? null };
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	rework: async (event) => {
		const actor = requireCan(event, 'reworkModule');
		const parsed = await parseForm(reworkSchema, event.request);
		if (!parsed.ok) return fail(400, { form: 'rework', ...parsed });
		try {
			return {
				form: 'rework',
				done: await reworkModule(await getDb(), actor, event.params.serial, parsed.data)
			};
		} catch (e) {
			return failFrom(e, { form: 'rework', ...parsed.data });
		}
	},
	scrap: async (event) => {
		const actor = requireCan(event, 'scrapModule');
		const parsed = await parseForm(scrapSchema, event.request);
		if (!parsed.ok) return fail(400, { form: 'scrap', ...parsed });
		try {
			return {
				form: 'scrap',
				done: await scrapModule(await getDb(), actor, event.params.serial, parsed.data)
			};
		} catch (e) {
			return failFrom(e, { form: 'scrap', ...parsed.data });
		}
	},
	correct: async (event) => {
		const actor = requireCan(event, 'correctBuild');
		const parsed = await parseForm(correctBuildSchema, event.request);
		if (!parsed.ok) return fail(400, { form: 'correct', ...parsed });
		try {
			return {
				form: 'correct',
				done: await correctBuild(await getDb(), actor, event.params.serial, parsed.data)
			};
		} catch (e) {
			return failFrom(e, { form: 'correct', ...parsed.data });
		}
	}
};
