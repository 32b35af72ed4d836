import { error, redirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { moduleModels } from '$lib/server/db/schema';
import { findModule } from '$lib/server/services/modules';
import { parseDigitalLink } from '$lib/domain/gs1';
import { errorFrom } from '$lib/server/http';
import type { PageServerLoad } from './$types';

/** GS1 Digital Link form of a label (/01/{GTIN-14}/21/{serial}) → the module's record. */
export const load: PageServerLoad = async (event) => {
	allowAnonymous(event);
	const link = parseDigitalLink(event.url.href);
	if (!link)
		error(
			404,
			'This is not a valid GS1 Digital Link: the GTIN check digit or the serial is wrong.'
		);
	const db = await getDb();
	let serial: string;
	try {
		const mod = await findModule(db, null, link.serial);
		const [model] = await db
			.select({ gtin: moduleModels.gtin })
			.from(moduleModels)
			.where(eq(moduleModels.id, mod.modelId));
		if (model.gtin !== link.gtin)
			error(404, `Module ${mod.serial} does not carry GTIN ${link.gtin}.`);
		serial = mod.serial;
	} catch (e) {
		errorFrom(e);
	}
	redirect(308, `/m/${encodeURIComponent(serial)}`);
};
