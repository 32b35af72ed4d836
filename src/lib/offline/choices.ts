/**
 * What the technician may do with a change the register refused, and what each choice does
 * to the queued operation. Nothing is dropped without being asked; every choice keeps
 * what was typed until the change is discarded on purpose.
 */
import { CONFLICT_PATH, DEPENDENCY_PATH } from '$lib/offline/contract';
import type { QueuedOp } from './store';

export type Choice = 'next-slot' | 'send-anyway' | 'send-again' | 'edit' | 'download' | 'discard';

export const CHOICE_LABELS: Record<Choice, string> = {
	'next-slot': 'Place it in the next empty slot instead',
	'send-anyway': 'Send my readings anyway, for the modules there now',
	'send-again': 'Send again',
	edit: 'Correct and send again',
	download: 'Save a copy of what I entered',
	discard: 'Discard this change'
};

export const isConflict = (op: QueuedOp) =>
	op.status === 'rejected' && !!op.issues?.some((i) => i.path === CONFLICT_PATH);

/** Form fields the register named in its issues: the ones to correct. */
export function fieldsToCorrect(op: QueuedOp): string[] {
	const names = (op.issues ?? [])
		.map((i) => i.path.split('.')[0])
		.filter((p) => p && p !== CONFLICT_PATH && p !== DEPENDENCY_PATH && p !== 'design');
	return [...new Set(names)].filter((n) => typeof (op.payload[n] ?? '') === 'string');
}

/** The choices that make sense for a refused change. */
export function choicesFor(op: QueuedOp): Choice[] {
	if (op.status !== 'rejected') return [];
	const out: Choice[] = [];
	const modulesChanged = op.issues?.some((i) =>
		i.message.includes('changed while you were offline')
	);
	if (isConflict(op)) {
		if (op.type === 'placeModule' && op.payload.stringNo !== undefined) out.push('next-slot');
		if (op.type === 'submitCommissioning' && modulesChanged) out.push('send-anyway');
	}
	if (fieldsToCorrect(op).length) out.push('edit');
	out.push('send-again');
	if (op.type === 'submitCommissioning' || op.type === 'createSite' || op.type === 'createSystem')
		out.push('download');
	out.push('discard');
	return out;
}

/** The operation after a choice (null: remove it from the phone). Edits go in `values`. */
export function applyChoice(
	op: QueuedOp,
	choice: Exclude<Choice, 'download'>,
	values: Record<string, string> = {}
): QueuedOp | null {
	const again = { ...op, status: 'waiting' as const, issues: undefined };
	switch (choice) {
		case 'discard':
			return null;
		case 'next-slot': {
			const { stringNo: _s, position: _p, ...payload } = op.payload;
			return {
				...again,
				payload,
				summary: op.summary.replace(/, string \d+ position \d+$/, ', next empty slot')
			};
		}
		case 'send-anyway': {
			const { serials: _serials, ...payload } = op.payload;
			return { ...again, payload };
		}
		case 'edit':
			return { ...again, payload: { ...op.payload, ...values } };
		case 'send-again':
			return again;
	}
}

/** A plain-text copy of a change as entered, for the technician to keep. */
export function copyOf(op: QueuedOp): string {
	const lines = Object.entries(op.payload)
		.filter(([, v]) => typeof v === 'string' || typeof v === 'number')
		.map(([k, v]) => `${k}: ${v}`);
	return `${op.summary}\nEntered on the phone ${new Date(op.createdAt).toISOString()}\n\n${lines.join('\n')}\n`;
}
