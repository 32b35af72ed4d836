import { z } from 'zod';
import { ROLE_NAMES } from '$lib/roles';

const blank = z.literal('').transform(() => undefined);

/** Filters of the people list (page and `GET /api/users`). */
export const peopleQuerySchema = z.object({
	q: z.string().trim().max(120, 'Search with at most 120 characters.').optional().or(blank),
	role: z.enum(ROLE_NAMES, { message: 'Choose a role from the list.' }).optional().or(blank),
	status: z
		.enum(['active', 'inactive', 'invited'], { message: 'Choose active, inactive or invited.' })
		.optional()
		.or(blank)
});
export type PeopleQuery = z.output<typeof peopleQuerySchema>;

/** A yes/no that arrives as JSON `true`/`false` or a form's "true"/"false". */
const flag = z.union([
	z.boolean(),
	z.enum(['true', 'false'], { message: 'Say true or false.' }).transform((v) => v === 'true')
]);

/** What an admin may change of a person: `PATCH /api/users/{id}` and the edit form. */
export const personPatchSchema = z
	.strictObject(
		{
			role: z.enum(ROLE_NAMES, { message: 'Choose a role from the list.' }).optional(),
			organisationId: z.coerce
				.number({ message: 'Choose an organisation.' })
				.int('Choose an organisation.')
				.positive('Choose an organisation.')
				.optional(),
			active: flag.optional()
		},
		{
			error: (iss) =>
				iss.code === 'unrecognized_keys'
					? 'Only role, organisationId and active can be changed here.'
					: undefined
		}
	)
	.refine((p) => p.role !== undefined || p.organisationId !== undefined || p.active !== undefined, {
		message: 'Say what to change: role, organisationId or active.'
	});
export type PersonPatch = z.output<typeof personPatchSchema>;
