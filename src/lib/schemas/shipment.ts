import { z } from 'zod';
import { SERIAL_EXAMPLE } from '$lib/domain/serial';
import { optionalText, recordId } from './fields';

/** Shipments are built up to this many modules per range entry (a pallet or two, not a warehouse). */
export const MAX_RANGE = 500;

const note = optionalText(500, 'Keep the note under 500 characters.');

export const newShipmentSchema = z.object({
	dealerOrgId: recordId('Choose a dealer.'),
	note
});

/** One scan: a bare serial, the QR label's URL or a GS1 Digital Link. */
export const shipmentScanSchema = z.object({
	scan: z
		.string()
		.trim()
		.min(1, `Scan a label or type a serial (like ${SERIAL_EXAMPLE}).`)
		.max(500, 'That scan is too long to be a module label.')
});

export const shipmentRangeSchema = z.object({
	first: z.string().trim().min(1, 'Enter the first serial of the range.').max(40),
	last: z.string().trim().min(1, 'Enter the last serial of the range.').max(40)
});

export const shipmentRemoveSchema = z.object({
	serial: z.string().trim().min(1, 'Say which module to take off.').max(40)
});

export const shipmentNoteSchema = z.object({ note });

export const shipmentDispatchSchema = z.object({
	confirm: z.literal('yes', {
		message: 'Tick the box to confirm the modules are packed and leaving.'
	})
});

export const shipmentDeleteSchema = z.object({
	sure: z.literal('yes', { message: 'Tick the box to confirm the draft should be deleted.' })
});
