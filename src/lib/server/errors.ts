/** Typed errors thrown by services; routes turn them into HTTP answers. */
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
