import type { Actor } from '$lib/server/actor';

declare global {
	namespace App {
		interface Locals {
			user: Actor | null;
			/** A rig authenticated by `Authorization: Bearer …`, or why its token was refused. */
			token: { actor: Actor; scope: 'imports' } | { error: string } | null;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
