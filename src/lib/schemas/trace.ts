import { z } from 'zod';
import { optionalCalendarDate, optionalText, queryInt } from './fields';

const text = (max: number, label: string) =>
	optionalText(max, `${label} has at most ${max} characters.`);

/** What to trace: any combination narrows the set; at least one is required. */
export const traceQuerySchema = z
	.object({
		lot: text(40, 'A cell lot code'),
		model: text(20, 'A model code'),
		builtFrom: optionalCalendarDate('Built from'),
		builtTo: optionalCalendarDate('Built to'),
		importId: queryInt(1, Number.MAX_SAFE_INTEGER, 'The import number')
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
	subject: z
		.string()
		.trim()
		.max(150, 'Keep the subject under 150 characters.')
		.min(5, 'Give the notice a subject.'),
	body: z
		.string()
		.trim()
		.min(20, 'Write what the dealers should do (at least 20 characters).')
		.max(5000)
});
