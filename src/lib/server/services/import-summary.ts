import type { imports } from '$lib/server/db/schema';
import type { RowError } from '$lib/domain/factory-csv';
import type { PreviewRow } from './import-analysis';

type ImportRow = typeof imports.$inferSelect;

export interface ImportResult {
	import: Omit<ImportRow, 'errors'>;
	errors: RowError[];
	preview: PreviewRow[];
	alreadySent: boolean;
}

/** An import row as the API answers it: its errors parsed, no preview unless given. */
export const summary = (row: ImportRow, extra: Partial<ImportResult> = {}): ImportResult => {
	const { errors, ...rest } = row;
	return { import: rest, errors: JSON.parse(errors), preview: [], alreadySent: false, ...extra };
};
