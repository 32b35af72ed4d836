import { z } from 'zod';
import { isCalendarDate } from './warranty-assess';

/** A real calendar day: 2026-02-30 or 2026-99-99 is refused with a message, never read as another day. */
const date = z
	.string()
	.max(10, { error: 'Use a date like 2026-11-30.', abort: true })
	.regex(/^\d{4}-\d{2}-\d{2}$/, { error: 'Use a date like 2026-11-30.', abort: true })
	.refine(isCalendarDate, 'This date does not exist; check the month and day.')
	.optional()
	.or(z.literal('').transform(() => undefined));
const text = (max: number) =>
	z
		.string()
		.trim()
		.max(max)
		.optional()
		.transform((v) => v || undefined);

/** What to trace: any combination narrows the set; at least one is required. */
export const traceQuerySchema = z
	.object({
		lot: text(40),
		model: text(20),
		builtFrom: date,
		builtTo: date,
		importId: z.coerce
			.number()
			.int()
			.positive()
			.optional()
			.or(z.literal('').transform(() => undefined))
	})
	.refine((q) => q.lot || q.model || q.builtFrom || q.builtTo || q.importId, {
		message: 'Give a cell lot, a model, a build date range or an import to trace.',
		path: ['lot']
	})
	.refine((q) => !q.builtFrom || !q.builtTo || q.builtFrom <= q.builtTo, {
		message: 'The range ends before it starts.',
		path: ['builtTo']
	});
/** Trace criteria; every field optional (the schema insists on at least one). */
export type TraceQuery = Partial<z.output<typeof traceQuerySchema>>;

export const noticeSchema = z.object({
	subject: z.string().trim().min(5, 'Give the notice a subject.').max(150),
	body: z
		.string()
		.trim()
		.min(20, 'Write what the dealers should do (at least 20 characters).')
		.max(5000)
});
