/**
 * The wording of the e-mails about a person's account: the invitation (and a new link for it)
 * and the password reset link. The services pass the facts; each returns subject and body.
 */
import type { Role } from '$lib/server/db/schema';
import { ROLE_LABELS } from '$lib/roles';
import type { Mail } from './claims';

/** Someone was given access (or, with `again`, a new link replacing the earlier ones). */
export function accountInvited(p: {
	name: string;
	by: string;
	role: Role;
	organisation: string;
	link: string;
	hours: number;
	again?: boolean;
}): Mail {
	const access = p.again
		? `${p.by} has sent you a new link to Packledger, the module register of Tidewater Cellworks, as ${ROLE_LABELS[p.role]} for ${p.organisation}. Earlier links no longer work.`
		: `${p.by} has given you access to Packledger, the module register of Tidewater Cellworks, as ${ROLE_LABELS[p.role]} for ${p.organisation}.`;
	return {
		subject: p.again ? 'Your Packledger account (new link)' : 'Your Packledger account',
		text:
			`Hello ${p.name},\n\n${access}\n\n` +
			`Choose your password here (the link works once, for ${p.hours} hours):\n${p.link}\n`
	};
}

/** Someone asked to reset the password of an active account. */
export function passwordResetAsked(p: { email: string; link: string; hours: number }): Mail {
	return {
		subject: 'Reset your Packledger password',
		text: `Someone asked to reset the password of ${p.email}. If it was you, choose a new one here (the link works once, for ${p.hours} hour):\n${p.link}\n\nIf it was not you, ignore this message.`
	};
}
