import type { Actor } from '$lib/server/actor';

declare global {
	namespace App {
		interface Locals {
			user: Actor | null;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
