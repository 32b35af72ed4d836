/**
 * Reads a route module's syntax tree (the `typescript` compiler API) and says, for each exported
 * handler, which guard its first statement calls and with which capability — or why it does not
 * count as guarded. Used by guard-coverage.test.ts; kept apart so its self-tests can feed it
 * source text directly.
 */
import ts from 'typescript';
import { isCapability } from '../../src/lib/policy';

/** The one module guards come from, as route files import it. */
export const GUARDS_MODULE = '$lib/server/auth/guards';
/** Guard functions and what each one demands (the capability is read from the call). */
export const GUARD_NAMES = ['requireCan', 'requireApiActor', 'requireUser', 'allowAnonymous'];
/** Recorded in the table for the guards that take no capability. */
export const SIGNED_IN = '(any signed-in user)';
export const ANONYMOUS = '(anyone, deliberately)';

const VERBS = new Set(['GET', 'POST', 'PUT', 'PATCH', 'DELETE', 'HEAD', 'OPTIONS', 'fallback']);

export interface HandlerVerdict {
	/** `load`, `GET`, `actions.decide` … */
	handler: string;
	/** What the guard demands (a capability, SIGNED_IN or ANONYMOUS); null when unguarded. */
	capability: string | null;
	/** Why the handler does not count as guarded; empty when it does. */
	problems: string[];
}

export interface FileVerdict {
	handlers: HandlerVerdict[];
	/** Problems of the file as a whole (shadowed guard names, re-exports …). */
	problems: string[];
}

type Fn = ts.ArrowFunction | ts.FunctionExpression | ts.FunctionDeclaration | ts.MethodDeclaration;

function unwrap(e: ts.Expression): ts.Expression {
	while (
		ts.isSatisfiesExpression(e) ||
		ts.isAsExpression(e) ||
		ts.isParenthesizedExpression(e) ||
		ts.isTypeAssertionExpression(e)
	)
		e = e.expression;
	return e;
}

function isExported(n: ts.Node): boolean {
	return (
		ts.canHaveModifiers(n) &&
		!!ts.getModifiers(n)?.some((m) => m.kind === ts.SyntaxKind.ExportKeyword)
	);
}

/** Names a declaration binds (variables, functions, classes, parameters, imports). */
function declaredName(n: ts.Node): ts.Identifier | undefined {
	if (
		(ts.isVariableDeclaration(n) ||
			ts.isParameter(n) ||
			ts.isBindingElement(n) ||
			ts.isFunctionDeclaration(n) ||
			ts.isFunctionExpression(n) ||
			ts.isClassDeclaration(n) ||
			ts.isClassExpression(n) ||
			ts.isEnumDeclaration(n) ||
			ts.isImportClause(n) ||
			ts.isNamespaceImport(n) ||
			ts.isImportEqualsDeclaration(n)) &&
		n.name &&
		ts.isIdentifier(n.name)
	)
		return n.name;
	return undefined;
}

export function analyseRouteModule(fileName: string, text: string): FileVerdict {
	const src = ts.createSourceFile(fileName, text, ts.ScriptTarget.Latest, true, ts.ScriptKind.TS);
	const problems: string[] = [];

	// Guards imported from the one guards module: local name → guard name.
	const guards = new Map<string, string>();
	const guardImportNodes = new Set<ts.Node>();
	for (const st of src.statements) {
		if (!ts.isImportDeclaration(st) || !ts.isStringLiteral(st.moduleSpecifier)) continue;
		const from = st.moduleSpecifier.text;
		const named = st.importClause?.namedBindings;
		if (!named || !ts.isNamedImports(named)) continue;
		for (const spec of named.elements) {
			const imported = (spec.propertyName ?? spec.name).text;
			if (!GUARD_NAMES.includes(imported) && !GUARD_NAMES.includes(spec.name.text)) continue;
			if (from !== GUARDS_MODULE) {
				problems.push(`${spec.name.text} is imported from '${from}', not from '${GUARDS_MODULE}'.`);
				continue;
			}
			if (st.importClause?.isTypeOnly || spec.isTypeOnly) continue;
			guards.set(spec.name.text, imported);
			guardImportNodes.add(spec);
		}
	}

	// No other binding anywhere in the file may reuse a guard's name (shadowing or look-alikes).
	const visit = (n: ts.Node) => {
		const id = declaredName(n);
		if (id && (guards.has(id.text) || GUARD_NAMES.includes(id.text)) && !guardImportNodes.has(n))
			problems.push(
				`line ${src.getLineAndCharacterOfPosition(id.getStart(src)).line + 1}: '${id.text}' is declared here, so it is not the guard from '${GUARDS_MODULE}'.`
			);
		if (ts.isImportSpecifier(n) && !guardImportNodes.has(n) && guards.has(n.name.text))
			problems.push(`'${n.name.text}' is imported twice.`);
		ts.forEachChild(n, visit);
	};
	ts.forEachChild(src, visit);

	// Top-level functions a handler may be written as (`export const GET = handler`).
	const topLevel = new Map<string, ts.Node>();
	for (const st of src.statements) {
		if (ts.isFunctionDeclaration(st) && st.name) topLevel.set(st.name.text, st);
		if (ts.isVariableStatement(st))
			for (const d of st.declarationList.declarations)
				if (ts.isIdentifier(d.name) && d.initializer) topLevel.set(d.name.text, d.initializer);
	}
	const resolve = (n: ts.Node, seen = new Set<string>()): Fn | null => {
		if (ts.isFunctionDeclaration(n) || ts.isMethodDeclaration(n)) return n;
		if (!ts.isExpression(n)) return null;
		const e = unwrap(n);
		if (ts.isArrowFunction(e) || ts.isFunctionExpression(e)) return e;
		if (ts.isIdentifier(e) && topLevel.has(e.text) && !seen.has(e.text)) {
			seen.add(e.text);
			return resolve(topLevel.get(e.text)!, seen);
		}
		return null;
	};

	const handlers: HandlerVerdict[] = [];
	const judge = (handler: string, node: ts.Node | null) =>
		handlers.push(judgeHandler(src, handler, node ? resolve(node) : null, guards));

	for (const st of src.statements) {
		if (ts.isExportDeclaration(st) && st.exportClause && ts.isNamedExports(st.exportClause))
			for (const spec of st.exportClause.elements) {
				const name = spec.name.text;
				if (name === 'load' || name === 'actions' || VERBS.has(name))
					problems.push(`'${name}' is exported by name; export a handler where it is declared.`);
			}
		if (ts.isFunctionDeclaration(st) && isExported(st) && st.name) {
			const name = st.name.text;
			if (name === 'load' || VERBS.has(name)) judge(name, st);
		}
		if (!ts.isVariableStatement(st) || !isExported(st)) continue;
		for (const d of st.declarationList.declarations) {
			if (!ts.isIdentifier(d.name)) continue;
			const name = d.name.text;
			if (name === 'load' || VERBS.has(name)) judge(name, d.initializer ?? null);
			if (name !== 'actions') continue;
			const init = d.initializer ? unwrap(d.initializer) : null;
			if (!init || !ts.isObjectLiteralExpression(init)) {
				problems.push("'actions' must be an object literal of handlers.");
				continue;
			}
			for (const p of init.properties) {
				const key = p.name ? p.name.getText(src) : '(spread)';
				if (ts.isPropertyAssignment(p)) judge(`actions.${key}`, p.initializer);
				else if (ts.isShorthandPropertyAssignment(p)) judge(`actions.${key}`, p.name);
				else if (ts.isMethodDeclaration(p)) judge(`actions.${key}`, p);
				else problems.push(`actions: ${key} is not a handler the test can read.`);
			}
		}
	}
	return { handlers, problems };
}

function judgeHandler(
	src: ts.SourceFile,
	handler: string,
	fn: Fn | null,
	guards: Map<string, string>
): HandlerVerdict {
	const no = (why: string): HandlerVerdict => ({ handler, capability: null, problems: [why] });
	if (!fn || !fn.body) return no(`${handler} is not a function written in this file.`);
	const [param] = fn.parameters;
	if (!param || !ts.isIdentifier(param.name))
		return no(`${handler} must take the request event as one named parameter (e.g. \`event\`).`);
	if (fn.parameters.some((p) => p.initializer))
		return no(`${handler} has a parameter default, which runs before the guard.`);
	const eventName = param.name.text;

	const first: ts.Node | undefined = ts.isBlock(fn.body) ? fn.body.statements[0] : fn.body;
	if (!first) return no(`${handler} is empty.`);
	let call: ts.Expression | undefined;
	if (ts.isExpressionStatement(first)) call = first.expression;
	else if (ts.isVariableStatement(first) && first.declarationList.declarations.length === 1)
		call = first.declarationList.declarations[0].initializer;
	else if (ts.isIfStatement(first)) call = first.expression;
	else if (!ts.isBlock(fn.body)) call = first as ts.Expression;
	call = call && unwrap(call);

	const line = src.getLineAndCharacterOfPosition(first.getStart(src)).line + 1;
	if (!call || !ts.isCallExpression(call) || !ts.isIdentifier(call.expression))
		return no(
			`${handler}: its first statement (line ${line}) is not a call of a guard from '${GUARDS_MODULE}'.`
		);
	const guard = guards.get(call.expression.text);
	if (!guard)
		return no(
			`${handler}: its first statement (line ${line}) calls '${call.expression.text}', which is not a guard imported from '${GUARDS_MODULE}'.`
		);
	const [arg0, arg1] = call.arguments;
	if (!arg0 || !ts.isIdentifier(arg0) || arg0.text !== eventName)
		return no(`${handler}: the guard must be given the handler's own event ('${eventName}').`);

	if (guard === 'requireUser') return { handler, capability: SIGNED_IN, problems: [] };
	if (guard === 'allowAnonymous') return { handler, capability: ANONYMOUS, problems: [] };
	if (!arg1 || !ts.isStringLiteralLike(arg1))
		return no(`${handler}: name the capability as a string literal so it can be checked.`);
	if (!isCapability(arg1.text))
		return no(`${handler}: '${arg1.text}' is not a capability of src/lib/policy.ts.`);
	return { handler, capability: arg1.text, problems: [] };
}
