/** Inputs of service campaigns: opening one (pages and `POST /api/campaigns`) and a step on a module. */
import { z } from 'zod';
import { CAMPAIGN_OUTCOMES, PERSON_ACTIONS } from '$lib/domain/campaign';
import { isCalendarDate } from './warranty-assess';

const text = (what: string, min: number, max: number) =>
	z
		.string({ error: `${what}.` })
		.trim()
		.min(min, { error: `${what} (at least ${min} characters).` })
		.max(max, { error: `${what}: keep it under ${max} characters.` });
const day = z
	.string()
	.max(10, { error: 'Use a date like 2026-11-30.' })
	.refine(isCalendarDate, { error: 'Use a real date like 2026-11-30.' });
const blank = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);

/** Which modules: a list of serials, or a traceability selection (lot, model, build period, import). */
export const campaignSelectSchema = z
	.object({
		serials: z
			.preprocess(
				(v) =>
					typeof v === 'string'
						? v.split(/[\s,;]+/).filter(Boolean)
						: Array.isArray(v)
							? [...new Set(v.map((s) => String(s).trim()).filter(Boolean))]
							: v,
				z.array(z.string().max(40)).max(5000, { error: 'At most 5000 serials per campaign.' })
			)
			.optional(),
		lot: z.preprocess(blank, z.string().trim().max(40).optional()),
		model: z.preprocess(blank, z.string().trim().max(20).optional()),
		builtFrom: z.preprocess(blank, day.optional()),
		builtTo: z.preprocess(blank, day.optional()),
		importId: z.preprocess(blank, z.coerce.number().int().positive().optional())
	})
	.refine((s) => s.serials?.length || s.lot || s.model || s.builtFrom || s.builtTo || s.importId, {
		error: 'Choose the modules: a list of serials, or a cell lot, model, build period or import.',
		path: ['select']
	})
	.refine((s) => !s.builtFrom || !s.builtTo || s.builtFrom <= s.builtTo, {
		error: 'The build period ends before it starts.',
		path: ['builtTo']
	});

export const openCampaignSchema = z.object({
	title: text('Give the campaign a title', 5, 120),
	notice: text('Write the notice to dealers', 20, 4000),
	remedy: text('Say what the remedy is', 10, 2000),
	reminderDays: z.preprocess(
		blank,
		z.coerce
			.number({ error: 'Reminder days must be a whole number.' })
			.int({ error: 'Reminder days must be a whole number.' })
			.min(1, { error: 'Remind after 1 to 90 days.' })
			.max(90, { error: 'Remind after 1 to 90 days.' })
			.default(14)
	),
	select: campaignSelectSchema
});
export type OpenCampaignInput = z.infer<typeof openCampaignSchema>;

/** `POST /api/campaigns/{id}/modules/{serial}` and the campaign page's buttons. */
export const campaignActionSchema = z.object({
	action: z.enum(PERSON_ACTIONS, { error: 'The action is acknowledge, resolve or unreachable.' }),
	outcome: z.preprocess(
		blank,
		z
			.enum(CAMPAIGN_OUTCOMES, {
				error: 'The outcome is inspected_ok, reworked, replaced or not_found.'
			})
			.optional()
	),
	note: z.preprocess(
		blank,
		z.string().trim().max(1000, { error: 'Keep the note under 1000 characters.' }).optional()
	)
});
export type CampaignActionInput = z.infer<typeof campaignActionSchema>;

/** The campaign form's flat fields, read into the same input as the API's. */
export const openCampaignFormSchema = z.preprocess((raw) => {
	const r = (raw ?? {}) as Record<string, unknown>;
	return {
		title: r.title,
		notice: r.notice,
		remedy: r.remedy,
		reminderDays: r.reminderDays,
		select: {
			serials: r.serials,
			lot: r.lot,
			model: r.model,
			builtFrom: r.builtFrom,
			builtTo: r.builtTo,
			importId: r.importId
		}
	};
}, openCampaignSchema);
