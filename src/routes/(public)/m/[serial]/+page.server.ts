import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getModuleRecord, getPublicRecord } from '$lib/server/services/modules';
import { NotFoundError } from '$lib/server/errors';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';
import { businessDay } from '$lib/server/services/calendar';

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
		return { publicRecord, full, role: user?.role ?? null };
	} catch (e) {
		errorFrom(e);
	}
};
