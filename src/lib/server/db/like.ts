import { sql, type SQL } from 'drizzle-orm';
import type { AnySQLiteColumn } from 'drizzle-orm/sqlite-core';

/**
 * `column LIKE '%text%'` with the text taken literally: `%`, `_` and `\` typed by a person
 * are escaped, so a search for "%" finds a percent sign, not every row.
 */
export function containsText(column: AnySQLiteColumn, text: string): SQL {
	const pattern = `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
	return sql`${column} LIKE ${pattern} ESCAPE '\\'`;
}
