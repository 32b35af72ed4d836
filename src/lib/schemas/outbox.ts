import { z } from 'zod';

const text = (max: number, what: string) =>
	z
		.string()
		.trim()
		.max(max, `${what} is at most ${max} characters.`)
		.transform((v) => v || undefined)
		.optional();

/** Filters of the outbox (page and `GET /api/outbox`): part of a recipient, part of a subject. */
export const outboxQuerySchema = z.object({
	to: text(254, 'The recipient'),
	subject: text(200, 'The subject')
});
export type OutboxQuery = z.output<typeof outboxQuerySchema>;
