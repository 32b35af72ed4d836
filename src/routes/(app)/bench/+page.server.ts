import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { buildSchema } from '$lib/schemas/build';
import { parseForm } from '$lib/server/validation';
import { serialFromScan } from '$lib/server/services/modules';
import {
	benchTarget,
	recentBuilds,
	registerBuild,
	shiftBuildCount,
	SHIFT_HOURS
} from '$lib/server/services/builds';
import { AppError } from '$lib/server/errors';
import { baseUrl } from '$lib/server/base-url';
import { failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'build');
	const db = await getDb();
	const scan = event.url.searchParams.get('scan');
	let target = null;
	let scanError: string | null = null;
	if (scan) {
		try {
			target = await benchTarget(
				db,
				actor,
				await serialFromScan(db, actor, scan, baseUrl(event.url))
			);
		} catch (e) {
			if (!(e instanceof AppError)) throw e;
			scanError = e.message;
		}
	}
	return {
		target,
		scanError,
		scan,
		recent: await recentBuilds(db, actor),
		shift: { count: await shiftBuildCount(db, actor), hours: SHIFT_HOURS },
		done: event.url.searchParams.get('done')
	};
};

export const actions: Actions = {
	build: async (event) => {
		const actor = requireCan(event, 'build');
		const parsed = await parseForm(
			buildSchema.extend({ serial: z.string().min(1) }),
			event.request
		);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			return {
				built: (await registerBuild(await getDb(), actor, parsed.data.serial, parsed.data)).serial
			};
		} catch (e) {
			return failFrom(e, { serial: parsed.data.serial });
		}
	}
};
