import { z } from 'zod';
import { optionalCalendarDate, optionalText, queryInt } from './fields';

const text = (max: number, what: string) =>
	optionalText(max, `${what} is at most ${max} characters.`);

/** Filters of the audit trail (page and `GET /api/audit`); every field optional. */
export const auditQuerySchema = z
	.object({
		actor: text(120, 'Who'),
		entity: text(40, 'The record type'),
		entityId: text(80, 'The record id'),
		action: text(60, 'The action'),
		from: optionalCalendarDate('From'),
		to: optionalCalendarDate('Until'),
		page: queryInt(1, 1_000_000, 'The page'),
		pageSize: queryInt(1, 500, 'The page size')
	})
	.refine((q) => !q.from || !q.to || q.from <= q.to, {
		message: 'The period ends before it starts.',
		path: ['to']
	});
export type AuditQuery = z.output<typeof auditQuerySchema>;
