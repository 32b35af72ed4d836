import { fail, redirect } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { parseForm, toIssues } from '$lib/server/validation';
import { failFrom } from '$lib/server/http';
import { baseUrl } from '$lib/server/base-url';
import { fileClaimFormSchema, logMappingSchema, MAX_LOG_BYTES } from '$lib/schemas/claim';
import { fileClaim } from '$lib/server/services/claim-filing';
import { logDealerFor, readInverterLog } from '$lib/server/services/claim-log';
import { businessDay } from '$lib/server/services/calendar';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'fileClaim');
	const kind = event.url.searchParams.get('kind') === 'on-delivery' ? 'on-delivery' : 'in-service';
	return {
		// "First seen on" starts at today on the assembler's calendar, not the browser's UTC date.
		today: await businessDay(await getDb(), new Date()),
		dealerScoped: actor.dealerScoped,
		serial: event.url.searchParams.get('serial') ?? '',
		kind
	};
};

/** The photos chosen in the form (an empty file input sends one empty entry). */
async function photosOf(value: unknown) {
	const files = (Array.isArray(value) ? value : [value]).filter(
		(f): f is File => f instanceof File && f.size > 0
	);
	return Promise.all(
		files.map(async (f) => ({
			name: f.name,
			type: f.type,
			bytes: new Uint8Array(await f.arrayBuffer())
		}))
	);
}

export const actions: Actions = {
	file: async (event) => {
		const actor = requireCan(event, 'fileClaim');
		const parsed = await parseForm(fileClaimFormSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				message: parsed.issues[0]?.message,
				issues: parsed.issues,
				values: parsed.values
			});
		const { kind, serials, fault, observedOn, throughputScope, log, photos, ...evidence } =
			parsed.data;
		let claim;
		try {
			claim = await fileClaim(await getDb(), actor, {
				kind,
				serials,
				fault,
				observedOn,
				evidence,
				throughputScope,
				log,
				photos: await photosOf(photos),
				baseUrl: baseUrl(event.url)
			});
		} catch (e) {
			return failFrom(e);
		}
		redirect(303, `/claims/${claim.id}?filed`);
	},
	/** Also used by the claim page's "add evidence" step: it posts here. */
	log: async (event) => {
		const actor = requireCan(event, 'fileClaim');
		const form = await event.request.formData();
		const file = form.get('file');
		if (!(file instanceof File) || file.size === 0)
			return fail(400, {
				message: 'Choose the inverter log: a CSV file exported from the inverter or its portal.'
			});
		if (file.size > MAX_LOG_BYTES)
			return fail(413, {
				message: `The log is ${(file.size / 1048576).toFixed(1)} MB; the limit is ${MAX_LOG_BYTES / 1048576} MB. Export a shorter period.`
			});
		let mapping;
		if (form.get('confirm') === '1') {
			const parsed = logMappingSchema.safeParse(
				Object.fromEntries([...form].filter(([, v]) => typeof v === 'string'))
			);
			if (!parsed.success)
				return fail(400, {
					message: toIssues(parsed.error)[0].message,
					issues: toIssues(parsed.error)
				});
			mapping = parsed.data;
		}
		try {
			const db = await getDb();
			const dealerOrgId = await logDealerFor(db, actor, String(form.get('serial') ?? ''));
			return {
				log: {
					...(await readInverterLog(db, actor, dealerOrgId, await file.text(), mapping)),
					fileName: file.name
				}
			};
		} catch (e) {
			return failFrom(e);
		}
	}
};
