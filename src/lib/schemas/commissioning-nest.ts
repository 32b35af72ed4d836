/**
 * Gathering the commissioning grid's flat form names (`moduleOcvV.<string>.<position>`,
 * `stringVoltageV.<string>`) into arrays, for the schema in ./commissioning. On its own so the
 * checklist's first paint (which imports ./commissioning-fields) does not carry it. Safe for the
 * browser. The keys are form names (bounded by the form body limit); each pattern is anchored
 * and matches at most a fixed number of characters.
 */
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
