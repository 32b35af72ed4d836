/**
 * Inputs of the fleet reliability page and API: the selection (`GET /api/reliability`),
 * and the two pure computations integrations may call (`POST /api/reliability/weibull`,
 * `POST /api/reliability/rate`). Sizes are bounded so every request answers in bounded time.
 */
import { z } from 'zod';
import { blankToUndefined as blank, optionalCalendarDate } from './fields';
import { MAX_EVENTS, MAX_UNITS } from '$lib/domain/reliability';
import { NEUTRAL } from '$lib/domain/format';

export const SLICE_DIMENSIONS = [
	'model',
	'lot',
	'buildMonth',
	'dealer',
	'application',
	'climate'
] as const;
export type SliceDimension = (typeof SLICE_DIMENSIONS)[number];
export const SLICE_LABELS: Record<SliceDimension, string> = {
	model: 'Model',
	lot: 'Cell lot',
	buildMonth: 'Build month',
	dealer: 'Dealer',
	application: 'Site application',
	climate: 'Climate band'
};

const key = (label: string) =>
	z.preprocess(
		blank,
		z
			.string()
			.trim()
			.max(60, { error: `${label} must be at most 60 characters.` })
			.optional()
	);

/** Query of the reliability page and `GET /api/reliability`; every filter is optional. */
export const reliabilityQuerySchema = z.object({
	asOf: optionalCalendarDate('asOf'),
	model: key('model'),
	lot: key('lot'),
	dealer: key('dealer'),
	buildMonth: z.preprocess(
		blank,
		z
			.string()
			.max(7, { error: 'buildMonth must be written YYYY-MM.', abort: true })
			.regex(/^\d{4}-(0[1-9]|1[0-2])$/, { error: 'buildMonth must be written YYYY-MM.' })
			.optional()
	),
	application: key('application'),
	climate: key('climate'),
	basis: z.preprocess(
		blank,
		z.enum(['covered', 'all'], { error: 'basis must be "covered" or "all".' }).default('covered')
	),
	by: z.preprocess(
		blank,
		z
			.enum(SLICE_DIMENSIONS, {
				error: `by must be one of: ${SLICE_DIMENSIONS.join(', ')}.`
			})
			.optional()
	)
});
export type ReliabilityQuery = z.infer<typeof reliabilityQuerySchema>;

/** `POST /api/reliability/weibull`: ages (any unit) and whether each unit is still running. */
export const weibullRequestSchema = z
	.object({
		times: z
			.array(
				z
					.number({ error: 'Each time must be a number.' })
					.positive({ error: 'Each time must be above 0.' })
					.finite(),
				{ error: 'times must be a list of positive numbers.' }
			)
			.min(1, { error: 'Give at least one time.' })
			.max(MAX_UNITS, {
				error: `At most ${NEUTRAL.number(MAX_UNITS)} times can be fitted at once.`
			}),
		censored: z
			.array(z.boolean({ error: 'Each censored flag must be true or false.' }), {
				error: 'censored must be a list of true/false, one per time.'
			})
			.max(MAX_UNITS, {
				error: `At most ${NEUTRAL.number(MAX_UNITS)} censored flags can be given.`
			})
	})
	.refine((r) => r.times.length === r.censored.length, {
		error: 'Give one censored flag per time: true for a unit still running, false for a failure.',
		path: ['censored']
	});

/** `POST /api/reliability/rate`: a count of events over an exposure (unit-years). */
export const rateRequestSchema = z.object({
	events: z
		.number({ error: 'events must be a whole number.' })
		.int({ error: 'events must be a whole number.' })
		.min(0, { error: 'events must not be negative.' })
		.max(MAX_EVENTS, { error: `events must be at most ${NEUTRAL.number(MAX_EVENTS)}.` }),
	exposure: z
		.number({ error: 'exposure must be a number of unit-years.' })
		.positive({ error: 'exposure must be above 0 unit-years.' })
		.max(1e12, { error: 'exposure must be at most 1e12 unit-years.' })
});
