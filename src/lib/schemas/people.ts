import { z } from 'zod';
import { ROLE_NAMES } from '$lib/roles';
import { optionalChoice, optionalText, recordId, trueFalse } from './fields';

/** Filters of the people list (page and `GET /api/users`). */
export const peopleQuerySchema = z.object({
	q: optionalText(120, 'Search with at most 120 characters.'),
	role: optionalChoice(ROLE_NAMES, 'Choose a role from the list.'),
	status: optionalChoice(['active', 'inactive', 'invited'], 'Choose active, inactive or invited.')
});
export type PeopleQuery = z.output<typeof peopleQuerySchema>;

/** A yes/no that arrives as JSON `true`/`false` or a form's "true"/"false". */
const flag = trueFalse('Say true or false.');

/** What an admin may change of a person: `PATCH /api/users/{id}` and the edit form. */
export const personPatchSchema = z
	.strictObject(
		{
			role: z.enum(ROLE_NAMES, { message: 'Choose a role from the list.' }).optional(),
			organisationId: recordId('Choose an organisation.').optional(),
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
