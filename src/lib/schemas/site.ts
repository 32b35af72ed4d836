/**
 * Inputs of the site and system forms (and their actions), and of `POST /api/design-check`,
 * which the system form calls as the technician types. Form values arrive as text:
 * numbers are read from text ("52,5" too), a blank optional number means "none".
 * Each issue names its field in words a technician on site can act on.
 */
import { z } from 'zod';
import type {
	CLIMATE_BANDS as DB_CLIMATE_BANDS,
	SITE_APPLICATIONS as DB_SITE_APPLICATIONS
} from '$lib/server/db/schema';
import { designCheckInputSchema, designModuleSchema, inverterWindowSchema } from './design-check';
import { readDecimal } from './fields';

export type SiteApplication = (typeof DB_SITE_APPLICATIONS)[number];

/** Our own words for what a site's battery is for; the Record type keeps it in step with the table's list. */
export const SITE_APPLICATION_LABELS: Record<SiteApplication, string> = {
	off_grid_home: 'Off-grid home',
	backup: 'Backup for a grid-connected home or business',
	ups: 'Uninterruptible supply (UPS)',
	workshop: 'Workshop, farm or yard',
	telecom: 'Telecom or radio hut',
	other: 'Something else'
};
export const SITE_APPLICATIONS = Object.keys(SITE_APPLICATION_LABELS) as SiteApplication[];

export type ClimateBand = (typeof DB_CLIMATE_BANDS)[number];

/** Main climate groups of the Köppen–Geiger classification, in plain words. */
export const CLIMATE_BAND_LABELS: Record<ClimateBand, string> = {
	tropical: 'Tropical (hot, humid)',
	arid: 'Arid (desert, steppe)',
	temperate: 'Temperate (mild winters)',
	continental: 'Continental (cold winters)',
	polar: 'Polar or alpine'
};
export const CLIMATE_BANDS = Object.keys(CLIMATE_BAND_LABELS) as ClimateBand[];

/** Form text to number by the one decimal rule: blank → undefined (so "required" can be said), "12,5" → 12.5. */
const fromText = (v: unknown) => {
	const n = readDecimal(v);
	return n === null
		? undefined
		: n === 'invalid'
			? typeof v === 'string'
				? v.slice(0, 50)
				: v
			: n;
};

const text = (label: string, min: number, max: number, example?: string) =>
	z
		.string({ error: `Enter the ${label.toLowerCase()}.` })
		.trim()
		.min(min, {
			error:
				min <= 1
					? `Enter the ${label.toLowerCase()}.`
					: `${label} needs at least ${min} characters${example ? `, e.g. ${example}` : ''}.`
		})
		.max(max, { error: `${label} must be at most ${max} characters.` });

const numberIn = (label: string, unit: string) =>
	z.number({
		error: (iss) =>
			iss.input === undefined
				? `Enter the ${label.toLowerCase()} (${unit}).`
				: `${label} must be a number in ${unit}.`
	});

const amount = (label: string, unit: string, max: number) =>
	numberIn(label, unit)
		.positive({ error: `${label} must be above 0 ${unit}.` })
		.max(max, { error: `${label} must be at most ${max} ${unit}; check the unit.` });

const required = (label: string, unit: string, max: number) =>
	z.preprocess(fromText, amount(label, unit, max));
const optional = (label: string, unit: string, max: number) =>
	z.preprocess(fromText, amount(label, unit, max).optional());

const whole = (label: string, min: number, max: number) =>
	z.preprocess(
		fromText,
		z
			.number({
				error: (iss) =>
					iss.input === undefined
						? `Enter the number of ${label.toLowerCase()}.`
						: `${label} must be a whole number.`
			})
			.int({ error: `${label} must be a whole number.` })
			.min(min, { error: `${label}: ${min} to ${max}.` })
			.max(max, { error: `${label}: ${min} to ${max}.` })
	);

/** Longest owner contact accepted (an e-mail address has at most 254, RFC 5321 §4.5.3.1.3). */
export const MAX_OWNER_CONTACT = 254;
const PHONE = /^\+?[0-9(][0-9 ()./-]{4,24}[0-9]$/;

/**
 * name@host.tld without spaces: one "@", something before it, a dot in the host with at
 * least two characters after it. Written without a pattern: the pattern it
 * replaces backtracked quadratically on a long "a@a.a.a…".
 */
function looksLikeEmail(v: string): boolean {
	if (/\s/.test(v)) return false;
	const at = v.indexOf('@');
	if (at < 1 || at !== v.lastIndexOf('@')) return false;
	const host = v.slice(at + 1);
	const dot = host.indexOf('.', 1);
	return dot > 0 && dot <= host.length - 3;
}

export const siteSchema = z.object({
	name: text('Site name', 2, 80, 'Willow Lane farm'),
	ownerName: text('Owner’s name', 2, 120),
	ownerContact: z
		.string({ error: 'Enter the owner’s phone number or e-mail address.' })
		.trim()
		.max(MAX_OWNER_CONTACT, {
			error: `The owner’s contact must be at most ${MAX_OWNER_CONTACT} characters.`,
			abort: true
		})
		.refine((v) => looksLikeEmail(v) || (PHONE.test(v) && v.replace(/\D/g, '').length >= 6), {
			error:
				'Enter the owner’s phone number (digits, spaces, +) or e-mail address (name@example.org).'
		}),
	address: text('Address', 5, 300),
	application: z.enum(SITE_APPLICATIONS as [SiteApplication, ...SiteApplication[]], {
		error: 'Choose what the battery is for.'
	}),
	/** Optional: blank means not recorded. */
	climateBand: z.preprocess(
		(v) => (v === '' || v == null ? null : v),
		z
			.enum(CLIMATE_BANDS as [ClimateBand, ...ClimateBand[]], {
				error: 'Choose one of the listed climate bands, or leave it blank.'
			})
			.nullable()
			.optional()
	),
	/** Assembler staff only (ignored for a dealer's people, whose own organisation is always used); blank = our own installation. */
	dealerOrgId: z.preprocess(
		(v) => (v === '' || v === 'none' || v == null ? null : fromText(v)),
		z
			.int({ error: 'Choose one of the listed dealers, or none.' })
			.positive({ error: 'Choose one of the listed dealers, or none.' })
			.nullable()
	)
});
export type SiteInput = z.infer<typeof siteSchema>;

export const MAX_SYSTEM_SERIES = 64;
export const MAX_SYSTEM_PARALLEL = 16;

export const systemSchema = z
	.object({
		name: text('System name', 1, 80),
		modelCode: z
			.string({ error: 'Choose the module model.' })
			.trim()
			.max(20, { error: 'Choose the module model from the list.', abort: true })
			.toUpperCase()
			.min(1, { error: 'Choose the module model.' }),
		series: whole('Modules in series', 1, MAX_SYSTEM_SERIES),
		parallel: whole('Strings in parallel', 1, MAX_SYSTEM_PARALLEL),
		inverterName: text('Inverter', 1, 80),
		inverterMinV: required('Inverter DC minimum', 'V', 1500),
		inverterMaxV: required('Inverter DC maximum', 'V', 1500),
		preferredMinV: optional('Preferred minimum', 'V', 1500),
		preferredMaxV: optional('Preferred maximum', 'V', 1500),
		maxChargeA: optional('Inverter maximum charge current', 'A', 5000),
		maxDischargeA: optional('Inverter maximum discharge current', 'A', 5000)
	})
	.superRefine((s, ctx) => {
		const issue = (path: string, message: string) =>
			ctx.addIssue({ code: 'custom', path: [path], message, input: s });
		if (s.inverterMinV >= s.inverterMaxV)
			issue('inverterMinV', 'Inverter DC minimum must be below its maximum.');
		const inWindow = (v: number) => v >= s.inverterMinV && v <= s.inverterMaxV;
		if (s.preferredMinV !== undefined && !inWindow(s.preferredMinV))
			issue('preferredMinV', 'Preferred minimum must lie within the inverter’s DC window.');
		if (s.preferredMaxV !== undefined && !inWindow(s.preferredMaxV))
			issue('preferredMaxV', 'Preferred maximum must lie within the inverter’s DC window.');
		if (
			s.preferredMinV !== undefined &&
			s.preferredMaxV !== undefined &&
			s.preferredMinV >= s.preferredMaxV
		)
			issue('preferredMinV', 'Preferred minimum must be below the preferred maximum.');
	});
export type SystemInput = z.infer<typeof systemSchema>;

/**
 * Body of `POST /api/design-check`: either the module's figures (`module`) or a model code
 * (`model`), plus series, parallel, the inverter window and an optional target energy.
 */
export const designCheckRequestSchema = designCheckInputSchema
	.omit({ module: true, variants: true })
	.extend({
		module: designModuleSchema.optional(),
		model: z
			.string({ error: 'model must be a model code such as TC-HC-48' })
			.trim()
			.toUpperCase()
			.min(1, { error: 'model must be a model code such as TC-HC-48' })
			.max(20, { error: 'model must be a model code such as TC-HC-48' })
			.optional(),
		inverter: inverterWindowSchema
	})
	.refine((r) => r.module !== undefined || r.model !== undefined, {
		error: 'Give the module’s figures ("module") or a model code ("model").',
		path: ['model']
	})
	.refine((r) => r.module === undefined || r.model === undefined, {
		error: 'Give either "module" or "model", not both.',
		path: ['model']
	});
export type DesignCheckRequest = z.infer<typeof designCheckRequestSchema>;

const slotNumber = z.preprocess(
	fromText,
	z
		.int({ error: 'Slot numbers are whole numbers.' })
		.min(1, { error: 'Slot numbers start at 1.' })
		.optional()
);

/** The scan box of the system page: a scan (serial, label URL or GS1 Digital Link), and the chosen slot if any. */
export const placeModuleSchema = z
	.object({
		scan: z
			.string({ error: 'Scan a module label or type its serial.' })
			.trim()
			.min(1, { error: 'Scan a module label or type its serial.' })
			.max(300, { error: 'That scan is too long to be a module label.' }),
		stringNo: slotNumber,
		position: slotNumber
	})
	.transform(({ scan, stringNo, position }) => ({
		scan,
		slot: stringNo !== undefined && position !== undefined ? { stringNo, position } : null
	}));

/** Taking a module out of a system before commissioning. */
export const removeModuleSchema = z.object({
	serial: z
		.string({ error: 'Say which module to take out.' })
		.trim()
		.min(1, { error: 'Say which module to take out.' })
		.max(40)
});
