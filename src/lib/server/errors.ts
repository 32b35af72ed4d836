/** Typed errors thrown by services; routes turn them into HTTP answers. */
import { TransitionError } from '$lib/domain/module-lifecycle';
import { ClaimTransitionError } from '$lib/domain/claim-workflow';
export class AppError extends Error {
	constructor(
		public readonly status: number,
		message: string,
		public readonly issues?: { path: string; message: string }[]
	) {
		super(message);
		this.name = new.target.name;
	}
}
export class NotFoundError extends AppError {
	constructor(message = 'Not found.') {
		super(404, message);
	}
}
export class ForbiddenError extends AppError {
	constructor(message = 'You do not have access to this.') {
		super(403, message);
	}
}
export class ConflictError extends AppError {
	constructor(message: string) {
		super(409, message);
	}
}
export class InvalidInputError extends AppError {
	constructor(message: string, issues?: { path: string; message: string }[]) {
		super(400, message, issues);
	}
}

/**
 * Runs a rule of the domain's lifecycles; a move it refuses becomes the typed error routes
 * answer (409 when the state forbids it now, 400 when the request is never a valid move).
 */
export function checkRule<T>(rule: () => T): T {
	try {
		return rule();
	} catch (e) {
		if (e instanceof TransitionError || e instanceof ClaimTransitionError)
			throw e.status === 400 ? new InvalidInputError(e.message) : new ConflictError(e.message);
		throw e;
	}
}
