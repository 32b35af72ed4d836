/**
 * Inputs of the battery passport: the admin's passport items of a model, access links for
 * recyclers, repairers and authorities, the export of a lot's passports, and the
 * access-link parameter of the passport page and API.
 */
import { z } from 'zod';
import { optionalText, queryInt, recordId } from './fields';
import { PASSPORT_ITEM_BY_KEY, type ItemInput } from '$lib/domain/passport-items';
import { NEUTRAL } from '$lib/domain/format';

const FIELDS = new Set(['value', 'unit', 'street', 'postalCode', 'country', 'min', 'max']);

/**
 * The model passport form: fields named `{item}.{part}` (e.g. `carbonFootprint.value`,
 * `carbonFootprint.unit`, `manufacturingPlace.street`). Unknown fields are refused so a
 * forged form cannot slip anything in; each value is bounded (tables up to 20 000 characters).
 */
export const passportItemsFormSchema = z
	.record(
		z.string().max(60),
		z.string().max(20_000, `An entry is longer than ${NEUTRAL.number(20_000)} characters.`)
	)
	.transform((raw, ctx) => {
		const out: Record<string, ItemInput> = {};
		for (const [name, value] of Object.entries(raw)) {
			const [key, part, extra] = name.split('.');
			if (extra !== undefined || !PASSPORT_ITEM_BY_KEY.has(key) || !FIELDS.has(part)) {
				ctx.addIssue({
					code: 'custom',
					message: `Unknown field “${name.slice(0, 60)}”.`,
					path: [name]
				});
				return z.NEVER;
			}
			(out[key] ??= {})[part as keyof ItemInput] = value;
		}
		return out;
	});

/** Who may hold an access link (the same list as the passport_grants table's party_kind). */
export const PASSPORT_GRANT_PARTIES = ['recycler', 'repairer', 'authority'] as const;

export const PARTY_LABELS: Record<(typeof PASSPORT_GRANT_PARTIES)[number], string> = {
	recycler: 'Recycler',
	repairer: 'Repairer',
	authority: 'Market-surveillance authority'
};

export const passportGrantSchema = z.object({
	partyKind: z.enum(PASSPORT_GRANT_PARTIES, { error: 'Choose recycler, repairer or authority.' }),
	partyName: z
		.string()
		.trim()
		.min(2, 'Name the organisation the link is for.')
		.max(120, 'Keep the name under 120 characters.'),
	scopeKind: z.enum(['module', 'lot'], { error: 'Choose a module or a cell lot.' }),
	scopeValue: z
		.string()
		.trim()
		.min(2, 'Give the module serial or the cell lot code.')
		.max(40, 'A serial or lot code is at most 40 characters.'),
	days: z.coerce
		.number({ error: 'Give the number of days the link stays valid.' })
		.int('Whole days only.')
		.min(1, 'At least 1 day.')
		.max(90, 'At most 90 days; issue a new link after that.')
});
export type PassportGrantInput = z.infer<typeof passportGrantSchema>;

export const revokeGrantSchema = z.object({ id: recordId('Choose the access link to revoke.') });

/** The access link's secret as it arrives in `?access=`. */
export const accessParamSchema = z
	.string()
	.max(100, 'This access link is malformed.')
	.regex(/^ppa_[A-Za-z0-9_-]{10,60}$/, 'This access link is malformed.')
	.nullable();

export const passportExportSchema = z
	.object({
		shipment: queryInt(1, Number.MAX_SAFE_INTEGER, 'The shipment'),
		lot: optionalText(40, 'A cell lot code is at most 40 characters.'),
		model: optionalText(40, 'A model code is at most 40 characters.'),
		format: z.enum(['jsonl', 'zip']).default('jsonl')
	})
	.refine((q) => [q.shipment, q.lot, q.model].filter((x) => x !== undefined).length === 1, {
		error: 'Choose exactly one of a shipment, a cell lot or a model to export.',
		path: ['shipment']
	});
export type PassportExportInput = z.infer<typeof passportExportSchema>;
