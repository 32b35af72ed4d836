/**
 * The parts of the commissioning form that need no schema library: the cautions, reading a
 * typed number, and gathering the grid's flat form names. The page's first paint uses only
 * these, so it does not wait for zod (`./commissioning` re-exports them). Safe for the browser.
 */

/** The cautions shown before any work on a battery, on the page and the certificate: `$lib/safety`. */
export { CAUTIONS as COMMISSIONING_CAUTIONS, CODES_TAKE_PRECEDENCE } from '$lib/safety';

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
