import { z } from 'zod';
import { isCalendarDate } from './warranty-assess';

/** A calendar date `YYYY-MM-DD` that exists (2026-02-30 does not); length bounded first. */
const calendarDate = z
	.string()
	.max(10, 'Use a date like 2026-11-30.')
	.refine(isCalendarDate, 'Use a real date like 2026-11-30.');

const blank = z.literal('').transform(() => undefined);
const text = (max: number, what: string) =>
	z
		.string()
		.trim()
		.max(max, `${what} is at most ${max} characters.`)
		.transform((v) => v || undefined)
		.optional();
const positive = (message: string, max: number) =>
	z.coerce.number({ message }).int(message).min(1, message).max(max, message);

/** Filters of the audit trail (page and `GET /api/audit`); every field optional. */
export const auditQuerySchema = z
	.object({
		actor: text(120, 'Who'),
		entity: text(40, 'The record type'),
		entityId: text(80, 'The record id'),
		action: text(60, 'The action'),
		from: calendarDate.optional().or(blank),
		to: calendarDate.optional().or(blank),
		page: positive('The page is a whole number from 1 up.', 1_000_000).optional().or(blank),
		pageSize: positive('Show 1 to 500 entries a page.', 500).optional().or(blank)
	})
	.refine((q) => !q.from || !q.to || q.from <= q.to, {
		message: 'The period ends before it starts.',
		path: ['to']
	});
export type AuditQuery = z.output<typeof auditQuerySchema>;
