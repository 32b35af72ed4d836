import { version } from '$app/environment';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getModuleRecord, getPublicRecord, publicRecordEtag } from '$lib/server/services/modules';
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
