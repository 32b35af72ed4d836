import { z } from 'zod';
import { recordId } from './fields';
import { ROLE_NAMES } from '$lib/roles';

/** RFC 5321 §4.5.3.1.3: a path holds at most 256 octets, so an address at most 254. */
export const MAX_EMAIL_LENGTH = 254;

/** An e-mail field: trimmed, lower-cased, and refused for length before any pattern runs on it. */
export const emailField = (message: string) =>
	z
		.string({ error: message })
		.trim()
		.max(MAX_EMAIL_LENGTH, {
			error: `An e-mail address has at most ${MAX_EMAIL_LENGTH} characters.`,
			abort: true
		})
		.toLowerCase()
		.email(message);

export const signInSchema = z.object({
	email: emailField('Enter the e-mail address you were invited with.'),
	password: z.string().min(1, 'Enter your password.').max(200)
});

export const passwordSchema = z
	.object({
		password: z
			.string()
			.min(10, 'Use at least 10 characters.')
			.max(200, 'Use at most 200 characters.'),
		confirm: z.string().max(200, 'Use at most 200 characters.')
	})
	.refine((v) => v.password === v.confirm, {
		message: 'The two passwords differ.',
		path: ['confirm']
	});

export const forgotSchema = z.object({
	email: emailField('Enter an e-mail address.')
});

export const inviteSchema = z.object({
	email: emailField('Enter a valid e-mail address.'),
	name: z.string().trim().min(2, 'Enter the person’s name.').max(120),
	role: z.enum(ROLE_NAMES, { message: 'Choose a role.' }),
	organisationId: recordId('Choose an organisation.')
});
