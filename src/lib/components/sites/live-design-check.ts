import {
	checkDesign,
	type DesignCheckResult,
	type DesignModule,
	type InverterWindow
} from '$lib/domain/design-check';
import { designCheckInputSchema } from '$lib/schemas/design-check';

type Issue = { path: string; message: string };

/** A model the form offers, with the figures the design check reads. */
export type DesignModel = { code: string; name: string; module: DesignModule };

export interface LiveCheck {
	result: DesignCheckResult | null;
	issues: Issue[];
	message: string;
}

const EMPTY: LiveCheck = { result: null, issues: [], message: '' };

/**
 * The system form's design check, run in the browser as the technician types: the same pure
 * `checkDesign` the server runs (and runs again when the system is saved), on the same
 * figures the register holds, with every model in production offered for suggestions. No
 * request, so it works without signal and answers on every keystroke.
 */
export function liveDesignCheck(
	models: readonly DesignModel[],
	input: {
		model: string;
		series: number;
		parallel: number;
		inverter: InverterWindow;
	} | null
): LiveCheck {
	if (!input) return EMPTY;
	const model = models.find((m) => m.code === input.model);
	if (!model) return { ...EMPTY, message: `There is no module model ${input.model} to check.` };
	const parsed = designCheckInputSchema.safeParse({
		module: model.module,
		series: input.series,
		parallel: input.parallel,
		inverter: input.inverter,
		variants: models.slice(0, 20).map((m) => ({ code: m.code, module: m.module }))
	});
	if (!parsed.success)
		return {
			...EMPTY,
			issues: parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }))
		};
	return { ...EMPTY, result: checkDesign(parsed.data) };
}
