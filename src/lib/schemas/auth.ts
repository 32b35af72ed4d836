import { z } from 'zod';
import { ROLE_NAMES } from '$lib/roles';

export const signInSchema = z.object({
	email: z.string().trim().toLowerCase().email('Enter the e-mail address you were invited with.'),
	password: z.string().min(1, 'Enter your password.').max(200)
});

export const passwordSchema = z
	.object({
		password: z
			.string()
			.min(10, 'Use at least 10 characters.')
			.max(200, 'Use at most 200 characters.'),
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, {
		message: 'The two passwords differ.',
		path: ['confirm']
	});

export const forgotSchema = z.object({
	email: z.string().trim().toLowerCase().email('Enter an e-mail address.')
});

export const inviteSchema = z.object({
	email: z.string().trim().toLowerCase().email('Enter a valid e-mail address.'),
	name: z.string().trim().min(2, 'Enter the person’s name.').max(120),
	role: z.enum(ROLE_NAMES, { message: 'Choose a role.' }),
	organisationId: z.coerce.number().int().positive('Choose an organisation.')
});
