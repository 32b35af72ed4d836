import { can, type Capability, type RoleName } from '$lib/policy';
import { ForbiddenError } from '$lib/server/errors';

/** Who is acting: a signed-in user, an API token, or the system itself (seed, migrations). */
export interface Actor {
	userId: number | null;
	role: RoleName | 'system' | 'rig';
	organisationId: number | null;
	/** True when the organisation is a dealer: every module query is scoped to it. */
	dealerScoped: boolean;
	label: string;
	/** The user's session version when the actor was read; a session token must carry the same. */
	sessionVersion?: number;
	/** Set when the request came with an API token instead of a session. */
	tokenId?: number;
}

export const SYSTEM_ACTOR: Actor = {
	userId: null,
	role: 'system',
	organisationId: null,
	dealerScoped: false,
	label: 'system'
};

/** The dealer organisation an actor's queries are limited to, or null for the assembler's staff. */
export function dealerScopeOf(actor: Actor): number | null {
	return actor.dealerScoped ? actor.organisationId : null;
}

/**
 * Refuses an actor whose role lacks the capability (services check again what the routes'
 * guards checked, so a service called from elsewhere keeps the rule). `allowSystem` lets the
 * system actor (seed, scripts) through where it acts on the organisation's behalf.
 */
export function assertCan(
	actor: Actor,
	capability: Capability,
	message: string,
	opts: { allowSystem?: boolean } = {}
): void {
	if (opts.allowSystem && actor.role === 'system') return;
	if (!can(actor.role, capability)) throw new ForbiddenError(message);
}
