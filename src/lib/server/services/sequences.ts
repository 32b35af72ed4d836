import { sql } from 'drizzle-orm';
import type { SQLiteColumn, SQLiteTable } from 'drizzle-orm/sqlite-core';
import type { Tx } from '$lib/server/db';
import { yearlyPrefix, yearlyReference } from '$lib/domain/reference';

/**
 * The next reference of a yearly sequence (claims, shipments, certificates), e.g. CL-2026-0043.
 * Call it inside the write transaction that inserts the row, so two people at once get
 * consecutive numbers. The largest number of the year is found as an integer, so
 * …-100000 counts as after …-99999 (text order would put it first).
 */
export async function nextYearlyReference(
	tx: Tx,
	table: SQLiteTable,
	column: SQLiteColumn,
	seq: { code: string; year: number; width: number }
): Promise<string> {
	const prefix = yearlyPrefix(seq.code, seq.year);
	const [row] = await tx
		.select({
			n: sql<number | null>`max(cast(substr(${column}, ${prefix.length + 1}) as integer))`
		})
		.from(table)
		.where(sql`${column} like ${prefix + '%'}`);
	return yearlyReference(seq.code, seq.year, (row?.n ?? 0) + 1, seq.width);
}
