/**
 * The parts of the `POST /api/sync` contract the phone needs at every page (no zod here, so
 * the pages do not carry the schemas): operation types, limits, result shape, issue paths.
 * The schemas themselves are in src/lib/schemas/sync.ts.
 */
export const SYNC_OPERATION_TYPES = [
	'createSite',
	'createSystem',
	'placeModule',
	'submitCommissioning',
	'addPhoto'
] as const;
export type SyncOperationType = (typeof SYNC_OPERATION_TYPES)[number];

/** At most this many operations per request; the phone sends a longer queue in parts. */
export const MAX_SYNC_OPERATIONS = 100;
/** Largest request body: room for one full-size photo (10 MB, base64) with its envelope. */
export const MAX_SYNC_BYTES = 16 * 1024 * 1024;
/** The phone keeps each request below this, so a poor connection loses little when it drops. */
export const SYNC_BATCH_BYTES = 4 * 1024 * 1024;

export const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
export const isOperationId = (v: unknown): v is string =>
	typeof v === 'string' && v.length === 36 && UUID.test(v);

export type SyncStatus = 'applied' | 'duplicate' | 'rejected';
export interface SyncIssue {
	path: string;
	message: string;
}
export interface SyncResult {
	id: string;
	status: SyncStatus;
	issues?: SyncIssue[];
	ref?: number | string;
}

/**
 * Issue path of a refusal because the record changed on the server meanwhile (a slot now
 * taken, a system commissioned by someone else): the phone shows these as conflicts to decide.
 */
export const CONFLICT_PATH = 'conflict';
/** Issue path of a refusal because an operation it depends on was not applied. */
export const DEPENDENCY_PATH = 'dependsOn';
