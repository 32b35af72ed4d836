import { z } from 'zod';
import { recordId } from './fields';

export const tokenSchema = z.object({
	name: z
		.string()
		.trim()
		.min(3, 'Name the rig or machine the token is for (e.g. “Rig 2, line B”).')
		.max(80)
});
export const revokeSchema = z.object({ id: recordId('Choose the token to revoke.') });
