/**
 * The parts of the commissioning form that need no schema library: the cautions, reading a
 * typed number, and gathering the grid's flat form names. The page's first paint uses only
 * these, so it does not wait for zod (`./commissioning` re-exports them). Safe for the browser.
 */

/** The cautions shown before any work on a battery (common practice for DC battery work; local codes and licensed practice prevail), on the page and the certificate. */
export const COMMISSIONING_CAUTIONS: { title: string; text: string }[] = [
	{
		title: 'Isolate and lock off',
		text: 'Open every battery and inverter isolator, lock and tag them off, and prove the circuit dead before you touch a conductor.'
	},
	{
		title: 'Insulated tools and suitable PPE',
		text: 'Use insulated tools, take off rings and watches, and wear eye protection and insulating gloves rated for the voltage.'
	},
	{
		title: 'DC arc and short-circuit hazard',
		text: 'A battery is always live: a short circuit delivers very high currents, and a DC arc does not go out by itself. Keep terminals covered until you connect them.'
	},
	{
		title: 'Polarity',
		text: 'Check the polarity of every connection before closing an isolator; reversed polarity can destroy the inverter and the protective devices.'
	},
	{
		title: 'Work by a licensed electrician',
		text: 'Installation and commissioning are done by a licensed electrician.'
	},
	{
		title: 'Local codes take precedence',
		text: 'Local electrical codes and installation standards take precedence over anything the application computes.'
	}
];

export const CODES_TAKE_PRECEDENCE =
	'Local electrical codes and installation standards take precedence over anything the application computes.';

/** Form text to a number: the one decimal rule, shared with every form. */
export { readDecimal } from '$lib/domain/decimal';

const GRID = /^moduleOcvV\.(\d{1,2})\.(\d{1,2})$/;
const STRING = /^stringVoltageV\.(\d{1,2})$/;

/** Gathers the flat form names of the grid into arrays; a JSON body with arrays passes through. */
export function nestForm(raw: unknown): unknown {
	if (!raw || typeof raw !== 'object' || Array.isArray(raw)) return raw;
	const out: Record<string, unknown> = { ...(raw as Record<string, unknown>) };
	const grid: unknown[][] = [];
	const strings: unknown[] = [];
	let flat = false;
	for (const [key, value] of Object.entries(raw)) {
		const g = GRID.exec(key);
		const s = STRING.exec(key);
		if (g) {
			const [si, pi] = [Number(g[1]) - 1, Number(g[2]) - 1];
			if (si < 0 || pi < 0) continue;
			(grid[si] ??= [])[pi] = value;
			flat = true;
		} else if (s && Number(s[1]) > 0) {
			strings[Number(s[1]) - 1] = value;
			flat = true;
		}
	}
	if (flat) {
		const width = Math.max(0, ...grid.map((r) => r?.length ?? 0));
		if (!Array.isArray(out.moduleOcvV))
			out.moduleOcvV = Array.from(grid, (row) =>
				Array.from({ length: width }, (_, i) => row?.[i] ?? null)
			);
		if (!Array.isArray(out.stringVoltageV))
			out.stringVoltageV = Array.from(strings, (v) => v ?? null);
	}
	return out;
}
