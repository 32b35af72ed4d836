/**
 * Every exported load, action and HTTP verb handler under src/routes must, as its FIRST
 * statement, call a guard imported from the one guards module (layouts protect neither actions
 * nor +server.ts files), and the capability it names must be the one ROUTE_CAPABILITIES expects
 * for that route. Read from the TypeScript syntax tree, not the text: comments, dead branches,
 * look-alike local functions and guards after the first statement do not count.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { analyseRouteModule, ANONYMOUS, SIGNED_IN } from './guard-analysis';
import { ROUTE_CAPABILITIES } from './route-capabilities';

const ROUTES = 'src/routes';

function walk(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
		e.isDirectory()
			? walk(join(dir, e.name))
			: /^\+(page|layout)\.server\.ts$|^\+server\.ts$/.test(e.name)
				? [join(dir, e.name)]
				: []
	);
}

/** Every problem of one route module against the table (empty when all is well). */
function check(
	rel: string,
	text: string,
	table: Record<string, string> = ROUTE_CAPABILITIES
): string[] {
	const verdict = analyseRouteModule(rel, text);
	const out = verdict.problems.map((p) => `${rel}: ${p}`);
	for (const h of verdict.handlers) {
		const key = `${rel} ${h.handler}`;
		if (h.problems.length) {
			out.push(...h.problems.map((p) => `${rel}: ${p}`));
			continue;
		}
		const expected = table[key];
		if (expected === undefined)
			out.push(
				`${key} is not in tests/server/route-capabilities.ts. Add the line\n  '${key}': '${h.capability}',\n` +
					`after checking that '${h.capability}' is what the handler should demand ` +
					`(src/lib/policy.ts lists capabilities and their roles; ${SIGNED_IN} is requireUser, ` +
					`${ANONYMOUS} is allowAnonymous).`
			);
		else if (expected !== h.capability)
			out.push(
				`${key} demands '${h.capability}' but the table expects '${expected}'. ` +
					`Change the guard back, or change the table if the route's audience really changed.`
			);
	}
	return out;
}

const files = walk(ROUTES).sort();
const sources = new Map(files.map((f) => [relative(ROUTES, f), readFileSync(f, 'utf8')]));

describe('every route handler checks authorisation first, with the expected capability', () => {
	it('finds route modules to check', () => expect(files.length).toBeGreaterThan(5));
	for (const [rel, text] of sources)
		it(rel, () => expect(check(rel, text), 'problems').toEqual([]));

	it('has no table entries for handlers that no longer exist', () => {
		const found = new Set(
			[...sources].flatMap(([rel, text]) =>
				analyseRouteModule(rel, text).handlers.map((h) => `${rel} ${h.handler}`)
			)
		);
		expect(Object.keys(ROUTE_CAPABILITIES).filter((k) => !found.has(k))).toEqual([]);
	});
});

describe('the guard check cannot be fooled (self-tests)', () => {
	const IMPORT = "import { requireCan, requireUser } from '$lib/server/auth/guards';\n";
	const table = { 'x/+page.server.ts load': 'ship', 'x/+page.server.ts actions.go': 'ship' };
	const problems = (text: string) => check('x/+page.server.ts', text, table);

	it('accepts a properly guarded module', () => {
		expect(
			problems(
				IMPORT +
					"export const load = async (event) => { const actor = requireCan(event, 'ship'); return { actor }; };\n" +
					"export const actions = { go: async (event) => { requireCan(event, 'ship'); return {}; } };"
			)
		).toEqual([]);
	});

	it('detects a handler without a guard', () => {
		const p = problems(
			IMPORT +
				'export const load = async () => ({ secret: 1 });\n' +
				"export const actions = { go: async (e) => requireCan(e, 'ship') };"
		);
		expect(p).toHaveLength(1);
		expect(p[0]).toMatch(/load/);
	});

	it('does not count a guard that is only a comment', () => {
		const p = problems(
			IMPORT +
				"export const load = async (event) => {\n\t// requireCan(event, 'ship');\n\treturn { secret: 1 };\n};"
		);
		expect(p.join('\n')).toMatch(/load: its first statement .* is not a call of a guard/);
	});

	it('does not count a guard in a branch that never runs', () => {
		const p = problems(
			IMPORT +
				'export const load = async (event) => {\n\tif (false) requireUser(event);\n\treturn { secret: 1 };\n};'
		);
		expect(p.join('\n')).toMatch(/load: its first statement .* is not a call of a guard/);
	});

	it('does not count a local look-alike function named like the guard', () => {
		const lookAlike =
			'function requireUser(e) { return e.locals.user; }\n' +
			'export const load = async (event) => { requireUser(event); return { secret: 1 }; };';
		// Without importing the real guard: the call is not a guard.
		expect(problems(lookAlike).join('\n')).toMatch(/'requireUser' is declared here/);
		expect(problems(lookAlike).join('\n')).toMatch(/calls 'requireUser', which is not a guard/);
		// Importing it as well but shadowing it inside the handler.
		expect(
			problems(
				IMPORT +
					'export const load = async (event) => { const requireUser = (e) => e; requireUser(event); return {}; };'
			).join('\n')
		).toMatch(/'requireUser' is declared here/);
		// Or importing a guard of the same name from another module.
		expect(
			problems(
				"import { requireCan } from './guards-of-my-own';\n" +
					"export const load = async (event) => { requireCan(event, 'ship'); return {}; };"
			).join('\n')
		).toMatch(/imported from '.\/guards-of-my-own'/);
	});

	it('does not count a guard placed after the data was read', () => {
		const p = problems(
			IMPORT +
				"import { getDb } from '$lib/server/db';\n" +
				"export const load = async (event) => {\n\tconst rows = await (await getDb()).query.modules.findMany();\n\trequireCan(event, 'ship');\n\treturn { rows };\n};"
		);
		expect(p.join('\n')).toMatch(/load: its first statement .* is not a call of a guard/);
	});

	it('does not count a guard given something other than the request event', () => {
		const p = problems(
			IMPORT +
				"export const load = async (event) => { requireCan({ locals: { user: {} } }, 'ship'); return {}; };"
		);
		expect(p.join('\n')).toMatch(/the handler's own event/);
	});

	it('fails a real route whose capability is weakened', () => {
		const rel = '(app)/shipments/[id=int]/+page.server.ts';
		const real = sources.get(rel)!;
		expect(check(rel, real)).toEqual([]);
		// A wider capability (everyone signed in may view the fleet) …
		const wider = real.replace("requireCan(event, 'ship')", "requireCan(event, 'viewFleet')");
		expect(wider).not.toBe(real);
		expect(check(rel, wider).join('\n')).toMatch(
			/shipments\/\[id=int\]\/\+page\.server\.ts load demands 'viewFleet' but the table expects 'ship'/
		);
		// … or no capability at all.
		const signedIn = real
			.replace("requireCan(event, 'ship')", 'requireUser(event)')
			.replace('import { requireCan }', 'import { requireCan, requireUser }');
		expect(check(rel, signedIn).join('\n')).toMatch(/demands '\(any signed-in user\)'/);
	});

	it('tells how to add a route missing from the table', () => {
		const p = check(
			'new-area/+page.server.ts',
			IMPORT + "export const load = async (event) => { requireCan(event, 'ship'); return {}; };",
			{}
		);
		expect(p.join('\n')).toMatch(
			/new-area\/\+page\.server\.ts load is not in tests\/server\/route-capabilities\.ts\. Add the line\n {2}'new-area\/\+page\.server\.ts load': 'ship',/
		);
	});
});
