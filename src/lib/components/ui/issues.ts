/** A problem with one input, as parseForm / parseJson and the services' typed errors give it. */
export type FieldIssue = { path: string; message: string };

/** The messages for one field (no repeats), from whatever an action or API answered. */
export function messagesFor(
	issues: readonly FieldIssue[] | null | undefined,
	path: string
): string[] {
	if (!issues) return [];
	return [...new Set(issues.filter((i) => i.path === path).map((i) => i.message))];
}

/** The first message for one field, or undefined. */
export function messageFor(
	issues: readonly FieldIssue[] | null | undefined,
	path: string
): string | undefined {
	return messagesFor(issues, path)[0];
}

/** The id the field's error text carries, for `aria-describedby`. */
export const errorIdOf = (path: string) => `${path.replace(/[^A-Za-z0-9_-]/g, '-')}-error`;
