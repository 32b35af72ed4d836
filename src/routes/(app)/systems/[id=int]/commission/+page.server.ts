import { fail } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { can } from '$lib/policy';
import { commissioningSchema, photoSchema } from '$lib/schemas/commissioning';
import { parseForm } from '$lib/server/validation';
import { loadSystemForCommissioning } from '$lib/server/services/commissioning';
import { submitCommissioning } from '$lib/server/services/commissioning-submit';
import { listAttachments, savePhoto } from '$lib/server/services/attachments';
import { AppError } from '$lib/server/errors';
import { errorFrom, failFrom } from '$lib/server/http';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewInstallations');
	const db = await getDb();
	try {
		const target = await loadSystemForCommissioning(db, actor, Number(event.params.id));
		const photos = await listAttachments(db, actor, {
			ownerKind: 'system',
			ownerId: target.system.id
		});
		return { target, photos, canSubmit: can(actor.role, 'commission') };
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	submit: async (event) => {
		const actor = requireCan(event, 'commission');
		const parsed = await parseForm(commissioningSchema, event.request);
		if (!parsed.ok) return fail(400, { issues: parsed.issues, values: parsed.values });
		try {
			return {
				submitted: await submitCommissioning(
					await getDb(),
					actor,
					Number(event.params.id),
					parsed.data
				)
			};
		} catch (e) {
			return failFrom(e);
		}
	},
	photo: async (event) => {
		const actor = requireCan(event, 'commission');
		const parsed = await parseForm(photoSchema, event.request);
		if (!parsed.ok) return fail(400, { photoError: parsed.issues[0].message });
		const { photo, caption } = parsed.data;
		try {
			const file = {
				name: photo.name,
				type: photo.type,
				bytes: new Uint8Array(await photo.arrayBuffer())
			};
			return {
				photoSaved: (
					await savePhoto(
						await getDb(),
						actor,
						{ ownerKind: 'system', ownerId: Number(event.params.id) },
						file,
						caption
					)
				).id
			};
		} catch (e) {
			// Shown beside the camera button, not with the checklist.
			if (e instanceof AppError) return fail(e.status, { photoError: e.message });
			throw e;
		}
	}
};
