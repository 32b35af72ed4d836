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

/**
 * Reads a JSON body of at most `maxBytes`, stopping as soon as more arrives (a declared
 * Content-Length over the limit is refused before reading): 413 too large, 400 not JSON.
 */
export async function readJsonBounded(
	request: Request,
	maxBytes: number,
	what: string
): Promise<{ ok: true; value: unknown } | { ok: false; status: 400 | 413; message: string }> {
	const mb = `${Math.round(maxBytes / 1024 / 1024)} MB`;
	const tooLarge = {
		ok: false as const,
		status: 413 as const,
		message: `${what[0].toUpperCase()}${what.slice(1)} may be at most ${mb}; send fewer changes (or fewer photos) per request.`
	};
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(declared) && declared > maxBytes) return tooLarge;
	if (!request.body) return { ok: false, status: 400, message: 'The request has no body.' };
	const reader = request.body.getReader();
	const chunks: Uint8Array[] = [];
	let total = 0;
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		total += value.byteLength;
		if (total > maxBytes) {
			await reader.cancel();
			return tooLarge;
		}
		chunks.push(value);
	}
	try {
		return { ok: true, value: JSON.parse(Buffer.concat(chunks).toString('utf8')) };
	} catch {
		return { ok: false, status: 400, message: 'The request body is not valid JSON.' };
	}
}
