/**
 * Input of the admin's commissioning rule set form: a new version of a market's set (limits,
 * the text each verdict cites, effective date). Numbers arrive as text ("0,05" too).
 */
import { z } from 'zod';
import type { CommissioningCitations, CommissioningLimits } from '$lib/domain/commissioning';

const fromText = (v: unknown) => {
	if (typeof v !== 'string') return v;
	const s = v.trim().replace(',', '.');
	if (s === '') return undefined;
	const n = Number(s);
	return Number.isNaN(n) ? v : n;
};

const limit = (label: string, unit: string, min: number, max: number) =>
	z.preprocess(
		fromText,
		z
			.number({
				error: (iss) =>
					iss.input === undefined
						? `Enter the ${label.toLowerCase()} (${unit}).`
						: `${label} must be a number in ${unit}.`
			})
			.min(min, { error: `${label} must be between ${min} and ${max} ${unit}.` })
			.max(max, { error: `${label} must be between ${min} and ${max} ${unit}.` })
	);

const citation = (label: string) =>
	z
		.string({ error: `Enter what the certificate cites for ${label}.` })
		.trim()
		.min(3, {
			error: `Enter what the certificate cites for ${label}, e.g. “common practice” or a clause.`
		})
		.max(300, { error: `Keep the citation for ${label} under 300 characters.` });

export const MARKET_CODE = /^[a-z0-9][a-z0-9-]{0,39}$/;

export const limitsSchema = z.object({
	moduleOcvToleranceV: limit('Largest difference between modules', 'V', 0.001, 5),
	stringSumTolerancePct: limit('String against its modules', '%', 0, 20),
	stringSumToleranceV: limit('String against its modules', 'V', 0, 50),
	overcurrentFactor: limit('Device current factor', '×', 1, 3),
	implausibleAboveFactor: limit('Implausible above', '×', 1.01, 10),
	implausibleBelowFactor: limit('Implausible below', '×', 0.01, 0.99)
}) satisfies z.ZodType<CommissioningLimits>;

export const citationsSchema = z.object({
	moduleVoltages: citation('module voltages'),
	stringSum: citation('string voltages'),
	insulation: citation('insulation'),
	overcurrent: citation('the device current rating'),
	voltageRating: citation('the device voltage rating'),
	breakingCapacity: citation('breaking capacity'),
	stringProtection: citation('per-string devices'),
	plausibility: citation('implausible readings')
}) satisfies z.ZodType<CommissioningCitations>;

export const ruleSetSchema = z.object({
	market: z
		.string({ error: 'Enter the market code.' })
		.trim()
		.toLowerCase()
		.refine((v) => v.length <= 40 && MARKET_CODE.test(v), {
			error:
				'Market code: lower-case letters, digits and dashes, up to 40, e.g. “default” or “coast-region”.'
		}),
	name: z
		.string({ error: 'Enter the rule set’s name.' })
		.trim()
		.min(3, { error: 'Enter the rule set’s name as the certificate prints it.' })
		.max(120, { error: 'Keep the name under 120 characters.' }),
	effectiveFrom: z
		.string({ error: 'Enter the day from which the rule set applies.' })
		.trim()
		.refine(
			(v) => v.length === 10 && /^\d{4}-\d{2}-\d{2}$/.test(v) && !Number.isNaN(Date.parse(v)),
			{
				error: 'Effective from: a calendar day such as 2027-01-01.'
			}
		),
	limits: limitsSchema,
	citations: citationsSchema
});
export type RuleSetInput = z.output<typeof ruleSetSchema>;

/** Form names are `limits.x` and `citations.y`; this gathers them into the nested objects. */
export function nestRuleSetForm(raw: Record<string, unknown>): Record<string, unknown> {
	const out: Record<string, unknown> = { limits: {}, citations: {} };
	for (const [k, v] of Object.entries(raw)) {
		const [head, tail] = k.split('.', 2);
		if ((head === 'limits' || head === 'citations') && tail)
			(out[head] as Record<string, unknown>)[tail] = v;
		else out[k] = v;
	}
	return out;
}

export const ruleSetFormSchema = z.preprocess(
	(v) => (v && typeof v === 'object' ? nestRuleSetForm(v as Record<string, unknown>) : v),
	ruleSetSchema
);

export const dealerMarketSchema = z.object({
	dealerOrgId: z.preprocess(fromText, z.int({ error: 'Choose a dealer.' }).positive()),
	market: z.preprocess(
		(v) => (typeof v === 'string' && v.trim() === '' ? null : v),
		z
			.string()
			.trim()
			.toLowerCase()
			.refine((v) => MARKET_CODE.test(v), { error: 'Choose one of the markets listed.' })
			.nullable()
	)
});
