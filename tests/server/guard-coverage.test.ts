/**
 * Fails when a route handler has no guard. Every exported load, action and
 * HTTP verb handler must call requireUser, requireRole, requireApiActor or
 * allowAnonymous itself: layouts do not protect actions or +server.ts files.
 */
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import ts from 'typescript';

const GUARDS = /\b(requireUser|requireRole|requireApiActor|allowAnonymous)\s*\(/;
const VERBS = new Set(['GET', 'POST', 'PUT', 'PATCH', 'DELETE', 'HEAD', 'OPTIONS', 'fallback']);

function walk(dir: string): string[] {
	return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
		e.isDirectory()
			? walk(join(dir, e.name))
			: /^\+(page|layout)\.server\.ts$|^\+server\.ts$/.test(e.name)
				? [join(dir, e.name)]
				: []
	);
}

/** Each handler: [name, source text of its body], resolving identifiers to local functions. */
function handlers(file: string): [string, string][] {
	const src = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.Latest, true);
	const locals = new Map<string, ts.Node>();
	src.forEachChild((n) => {
		if (ts.isFunctionDeclaration(n) && n.name) locals.set(n.name.text, n);
		if (ts.isVariableStatement(n))
			for (const d of n.declarationList.declarations)
				if (ts.isIdentifier(d.name) && d.initializer) locals.set(d.name.text, d.initializer);
	});
	const body = (n: ts.Node): string =>
		ts.isIdentifier(n) && locals.has(n.text) ? body(locals.get(n.text)!) : n.getText(src);
	const out: [string, string][] = [];
	const exported = (n: ts.Node) =>
		ts.canHaveModifiers(n) &&
		ts.getModifiers(n)?.some((m) => m.kind === ts.SyntaxKind.ExportKeyword);
	src.forEachChild((n) => {
		if (
			ts.isFunctionDeclaration(n) &&
			exported(n) &&
			n.name &&
			(n.name.text === 'load' || VERBS.has(n.name.text))
		)
			out.push([n.name.text, n.getText(src)]);
		if (ts.isVariableStatement(n) && exported(n)) {
			for (const d of n.declarationList.declarations) {
				if (!ts.isIdentifier(d.name) || !d.initializer) continue;
				const name = d.name.text;
				if (name === 'load' || VERBS.has(name)) out.push([name, body(d.initializer)]);
				if (name === 'actions') {
					let init: ts.Node = d.initializer;
					while (ts.isSatisfiesExpression(init) || ts.isAsExpression(init)) init = init.expression;
					if (!ts.isObjectLiteralExpression(init))
						throw new Error(`${file}: actions must be an object literal`);
					for (const p of init.properties) {
						if (ts.isPropertyAssignment(p))
							out.push([`actions.${p.name.getText(src)}`, body(p.initializer)]);
						else if (ts.isShorthandPropertyAssignment(p))
							out.push([`actions.${p.name.text}`, body(p.name)]);
						else if (ts.isMethodDeclaration(p))
							out.push([`actions.${p.name.getText(src)}`, p.getText(src)]);
					}
				}
			}
		}
	});
	return out;
}

describe('every route handler checks authorisation itself', () => {
	const files = walk('src/routes');
	it('finds route modules to check', () => expect(files.length).toBeGreaterThan(5));
	for (const file of files) {
		for (const [name, text] of handlers(file)) {
			it(`${file} → ${name}`, () =>
				expect(GUARDS.test(text), `${name} in ${file} calls no guard`).toBe(true));
		}
	}
	it('detects a handler without a guard (self-test)', () => {
		const tmp = join(process.env.TMPDIR ?? '/tmp', `+page.server.ts`);
		writeFileSync(
			tmp,
			'export const load = async () => ({ secret: 1 });\nexport const actions = { x: async (e) => requireUser(e) };'
		);
		const found = handlers(tmp);
		expect(found.map(([n, t]) => [n, GUARDS.test(t)])).toEqual([
			['load', false],
			['actions.x', true]
		]);
	});
});
