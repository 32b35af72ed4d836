/**
 * `POST /api/sync`: the changes a phone made offline, sent once the network is back.
 * `{ operations: [{ id, type, payload }] }` → `{ results: [{ id, status, issues?, ref? }] }`,
 * one result per operation in order. `id` is a UUID the phone made; `payload` is what the
 * matching form action takes (its fields as the form sends them) and is validated by that
 * form's own schema on the server, plus the record it applies to: `siteId` / `systemId` is
 * either a record id (a number) or the id of an earlier operation that created the record.
 * Safe for the browser: the phone builds its queue with these types.
 */
import { z } from 'zod';

import {
	CONFLICT_PATH,
	DEPENDENCY_PATH,
	isOperationId,
	MAX_SYNC_BYTES,
	MAX_SYNC_OPERATIONS,
	SYNC_BATCH_BYTES,
	SYNC_OPERATION_TYPES,
	UUID
} from '$lib/offline/contract';

export {
	CONFLICT_PATH,
	DEPENDENCY_PATH,
	isOperationId,
	MAX_SYNC_BYTES,
	MAX_SYNC_OPERATIONS,
	SYNC_BATCH_BYTES,
	SYNC_OPERATION_TYPES
};
export type { SyncIssue, SyncOperationType, SyncResult, SyncStatus } from '$lib/offline/contract';

export const operationIdSchema = z
	.string({ error: 'Each operation needs an id (a UUID made on the phone).' })
	.refine((v) => v.length === 36 && UUID.test(v), {
		error: 'An operation id is a UUID such as 3f0c…-….'
	})
	.transform((v) => v.toLowerCase());

/** The record an operation applies to: a record id, or the id of the earlier operation that created it. */
export const recordRefSchema = (what: 'site' | 'system') =>
	z.union([z.int().positive(), operationIdSchema], {
		error: `Say which ${what}: its number, or the id of the operation that created it on the phone.`
	});

export const syncOperationSchema = z.object({
	id: operationIdSchema,
	type: z.enum(SYNC_OPERATION_TYPES, {
		error: `type must be one of ${SYNC_OPERATION_TYPES.join(', ')}.`
	}),
	payload: z.record(z.string(), z.unknown(), {
		error: 'payload must be an object with the form’s fields.'
	})
});
export type SyncOperation = z.infer<typeof syncOperationSchema>;

export const syncRequestSchema = z.object({
	operations: z
		.array(syncOperationSchema, { error: 'Send { "operations": [ … ] }.' })
		.min(1, { error: 'Send at least one operation.' })
		.max(MAX_SYNC_OPERATIONS, {
			error: `Send at most ${MAX_SYNC_OPERATIONS} operations per request; send the rest in another request.`
		})
});

/** A photo inside an `addPhoto` payload: the file's bytes as base64. */
export const syncPhotoSchema = z.object({
	name: z.string().max(200).default('photo.jpg'),
	type: z.string().max(100).default(''),
	base64: z
		.string({ error: 'The photo’s bytes are missing (base64).' })
		.max(Math.ceil((10 * 1024 * 1024 + 1) / 3) * 4 + 4, {
			error: 'The photo is over the 10 MB limit.'
		})
});
