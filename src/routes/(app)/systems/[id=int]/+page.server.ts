import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { can } from '$lib/policy';
import { getDb } from '$lib/server/db';
import { placeModuleSchema, removeModuleSchema } from '$lib/schemas/site';
import { parseForm } from '$lib/server/validation';
import { errorFrom, failFrom } from '$lib/server/http';
import { baseUrl } from '$lib/server/base-url';
import { getSystem } from '$lib/server/services/systems';
import { placeModule, removeModule } from '$lib/server/services/system-modules';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	try {
		const view = await getSystem(await getDb(), actor, Number(event.params.id));
		return {
			...view,
			canChange: can(actor.role, 'install'),
			created: event.url.searchParams.has('created')
		};
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	place: async (event) => {
		const actor = requireCan(event, 'install');
		const parsed = await parseForm(placeModuleSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				action: 'place',
				message: parsed.issues[0]?.message ?? 'Scan a module label.',
				issues: parsed.issues
			});
		try {
			const placed = await placeModule(
				await getDb(),
				actor,
				Number(event.params.id),
				parsed.data.slot,
				parsed.data.scan,
				baseUrl(event.url)
			);
			return { action: 'place', placed };
		} catch (e) {
			return failFrom(e, { action: 'place', scan: parsed.data.scan });
		}
	},
	remove: async (event) => {
		const actor = requireCan(event, 'install');
		const parsed = await parseForm(removeModuleSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				action: 'remove',
				message: parsed.issues[0]?.message ?? 'Say which module to take out.',
				issues: parsed.issues
			});
		try {
			return {
				action: 'remove',
				removed: await removeModule(
					await getDb(),
					actor,
					Number(event.params.id),
					parsed.data.serial
				)
			};
		} catch (e) {
			return failFrom(e, { action: 'remove' });
		}
	}
};
