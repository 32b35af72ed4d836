import type { z } from 'zod';

export type Issue = { path: string; message: string };
export type Parsed<T> =
	{ ok: true; data: T } | { ok: false; issues: Issue[]; values: Record<string, string> };

export function toIssues(error: z.ZodError): Issue[] {
	return error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

const SECRET_FIELDS = new Set(['password', 'confirm', 'token']);

/** Form values to echo back after a failed submission, never secrets. */
function echo(form: FormData): Record<string, string> {
	const values: Record<string, string> = {};
	for (const [k, v] of form) if (typeof v === 'string' && !SECRET_FIELDS.has(k)) values[k] = v;
	return values;
}

/** Parses a submitted form with the input's one schema; repeated keys become arrays. */
export async function parseForm<S extends z.ZodType>(
	schema: S,
	request: Request
): Promise<Parsed<z.infer<S>>> {
	let form: FormData;
	try {
		form = await request.formData();
	} catch {
		return {
			ok: false,
			issues: [{ path: '', message: 'The form could not be read. Reload the page and try again.' }],
			values: {}
		};
	}
	const raw: Record<string, unknown> = {};
	for (const key of new Set(form.keys())) {
		const all = form.getAll(key);
		raw[key] = all.length > 1 ? all : all[0];
	}
	const result = schema.safeParse(raw);
	if (result.success) return { ok: true, data: result.data };
	return { ok: false, issues: toIssues(result.error), values: echo(form) };
}

/**
 * Parses a URL's query with the input's one schema (a page's load, an API GET); repeated
 * keys become arrays. Failures carry the issues and the values to show again.
 */
export function parseQuery<S extends z.ZodType>(
	schema: S,
	params: URLSearchParams
): Parsed<z.infer<S>> {
	const raw: Record<string, string | string[]> = {};
	for (const key of new Set(params.keys())) {
		const all = params.getAll(key);
		raw[key] = all.length > 1 ? all : all[0];
	}
	const result = schema.safeParse(raw);
	if (result.success) return { ok: true, data: result.data };
	const values: Record<string, string> = {};
	for (const [k, v] of params) if (!SECRET_FIELDS.has(k)) values[k] = v.slice(0, 300);
	return { ok: false, issues: toIssues(result.error), values };
}

/** Parses a JSON body with the input's one schema. */
export async function parseJson<S extends z.ZodType>(
	schema: S,
	request: Request
): Promise<Parsed<z.infer<S>>> {
	let body: unknown;
	try {
		body = await request.json();
	} catch {
		return {
			ok: false,
			issues: [{ path: '', message: 'The request body is not valid JSON.' }],
			values: {}
		};
	}
	const result = schema.safeParse(body);
	if (result.success) return { ok: true, data: result.data };
	return { ok: false, issues: toIssues(result.error), values: {} };
}
