import { json } from '@sveltejs/kit';
import { allowAnonymous } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { getPassport } from '$lib/server/services/passports';
import { accessParamSchema } from '$lib/schemas/passport';
import { baseUrl } from '$lib/server/base-url';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * A module's battery passport as JSON (Battery Pass data model v1.2.0 sections). The tier
 * is decided on the server: public for anyone; the condition for the module's dealer and
 * the assembler's staff, or with a valid access link (`?access=ppa_…`).
 */
export const GET: RequestHandler = async (event) => {
	const user = allowAnonymous(event);
	const access = accessParamSchema.safeParse(event.url.searchParams.get('access'));
	if (!access.success)
		return json({ message: access.error.issues[0].message, issues: [] }, { status: 400 });
	try {
		const passport = await getPassport(
			await getDb(),
			{ actor: user, access: access.data },
			event.params.serial,
			baseUrl(event.url)
		);
		const download = event.url.searchParams.get('download') !== null;
		return json(passport, {
			headers: {
				'cache-control': passport.tier === 'public' ? 'public, max-age=300' : 'private, no-store',
				'referrer-policy': 'no-referrer',
				'access-control-allow-origin': passport.tier === 'public' ? '*' : 'null',
				...(download
					? {
							'content-disposition': `attachment; filename="passport-${passport.identifier}-${passport.tier}.json"`
						}
					: {})
			}
		});
	} catch (e) {
		return jsonFrom(e);
	}
};
