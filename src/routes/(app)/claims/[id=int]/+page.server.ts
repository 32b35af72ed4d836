import { error, fail, type RequestEvent } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { can } from '$lib/policy';
import { getDb } from '$lib/server/db';
import { parseForm } from '$lib/server/validation';
import { errorFrom, failFrom } from '$lib/server/http';
import { baseUrl } from '$lib/server/base-url';
import {
	addEvidenceSchema,
	commentSchema,
	decideClaimSchema,
	moveClaimSchema,
	replacementSchema,
	returnInspectionSchema
} from '$lib/schemas/claim';
import { getClaim } from '$lib/server/services/claims';
import { listAttachments, savePhoto } from '$lib/server/services/attachments';
import { photoSchema } from '$lib/schemas/commissioning';
import {
	addEvidence,
	commentOnClaim,
	decideClaim,
	moveClaim,
	recordReturnInspection,
	replaceModule
} from '$lib/server/services/claim-workflow';
import type { Actions, PageServerLoad } from './$types';

function claimId(event: Pick<RequestEvent, 'params'>): number {
	const id = Number(event.params.id);
	if (!Number.isInteger(id) || id < 1) error(404, 'There is no such claim.');
	return id;
}

/** A failure that says which form it belongs to, so the page shows it beside that form. */
function failed(form: string, e: unknown) {
	const f = failFrom(e);
	return fail(f.status, { ...f.data, form });
}

export const load: PageServerLoad = async (event) => {
	const actor = requireCan(event, 'viewClaims');
	try {
		const db = await getDb();
		const detail = await getClaim(db, actor, claimId(event));
		const photos = await listAttachments(db, actor, {
			ownerKind: 'claim',
			ownerId: claimId(event)
		});
		const officer = !actor.dealerScoped && can(actor.role, 'decideClaim');
		return {
			...detail,
			photos,
			officer,
			canReplace: can(actor.role, 'replaceModule'),
			canHandleReturn: !actor.dealerScoped && can(actor.role, 'handleReturn'),
			isFiler: actor.userId === null ? false : detail.claim.filedBy?.id === actor.userId
		};
	} catch (e) {
		errorFrom(e);
	}
};

export const actions: Actions = {
	photo: async (event) => {
		const actor = requireCan(event, 'addClaimEvidence');
		const parsed = await parseForm(photoSchema, event.request);
		if (!parsed.ok)
			return fail(400, { form: 'photo', message: parsed.issues[0].message, issues: parsed.issues });
		const { photo, caption } = parsed.data;
		try {
			const file = {
				name: photo.name,
				type: photo.type,
				bytes: new Uint8Array(await photo.arrayBuffer())
			};
			await savePhoto(
				await getDb(),
				actor,
				{ ownerKind: 'claim', ownerId: claimId(event) },
				file,
				caption
			);
			return { done: 'photo' };
		} catch (e) {
			return failed('photo', e);
		}
	},
	move: async (event) => {
		const actor = requireCan(event, 'decideClaim');
		const parsed = await parseForm(moveClaimSchema, event.request);
		if (!parsed.ok)
			return fail(400, { form: 'move', message: parsed.issues[0].message, issues: parsed.issues });
		try {
			return {
				done: 'move',
				...(await moveClaim(await getDb(), actor, claimId(event), parsed.data))
			};
		} catch (e) {
			return failed('move', e);
		}
	},
	decide: async (event) => {
		const actor = requireCan(event, 'decideClaim');
		const parsed = await parseForm(decideClaimSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				form: 'decide',
				message: parsed.issues[0].message,
				issues: parsed.issues
			});
		try {
			return {
				done: 'decide',
				...(await decideClaim(await getDb(), actor, claimId(event), parsed.data))
			};
		} catch (e) {
			return failed('decide', e);
		}
	},
	comment: async (event) => {
		const actor = requireCan(event, 'addClaimEvidence');
		const parsed = await parseForm(commentSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				form: 'comment',
				message: parsed.issues[0].message,
				issues: parsed.issues
			});
		try {
			await commentOnClaim(await getDb(), actor, claimId(event), parsed.data.comment);
			return { done: 'comment' };
		} catch (e) {
			return failed('comment', e);
		}
	},
	evidence: async (event) => {
		const actor = requireCan(event, 'addClaimEvidence');
		const parsed = await parseForm(addEvidenceSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				form: 'evidence',
				message: parsed.issues[0].message,
				issues: parsed.issues
			});
		try {
			return {
				done: 'evidence',
				...(await addEvidence(await getDb(), actor, claimId(event), parsed.data))
			};
		} catch (e) {
			return failed('evidence', e);
		}
	},
	replace: async (event) => {
		const actor = requireCan(event, 'replaceModule');
		const parsed = await parseForm(replacementSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				form: 'replace',
				message: parsed.issues[0].message,
				issues: parsed.issues
			});
		try {
			const { failedSerial, replacementScan } = parsed.data;
			return {
				done: 'replace',
				...(await replaceModule(
					await getDb(),
					actor,
					claimId(event),
					failedSerial,
					replacementScan,
					baseUrl(event.url)
				))
			};
		} catch (e) {
			return failed('replace', e);
		}
	},
	inspect: async (event) => {
		const actor = requireCan(event, 'inspectReturn');
		const parsed = await parseForm(returnInspectionSchema, event.request);
		if (!parsed.ok)
			return fail(400, {
				form: 'inspect',
				message: parsed.issues[0].message,
				issues: parsed.issues
			});
		try {
			const { serial, ...inspection } = parsed.data;
			return {
				done: 'inspect',
				...(await recordReturnInspection(await getDb(), actor, claimId(event), serial, inspection))
			};
		} catch (e) {
			return failed('inspect', e);
		}
	}
};
