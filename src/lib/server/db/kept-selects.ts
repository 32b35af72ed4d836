import type { Client, InStatement, ResultSet, Row } from '@libsql/client';
import type { LocalReader } from './reader';

/**
 * `@libsql/client` for a local file prepares every statement again on every `execute` and
 * builds each row with `Object.defineProperty` per column (its `executeStmt` and `rowFromSql`):
 * under 200 clients that was a fifth of the server's CPU (a profile of `npm run bench:load`:
 * `prepare` 10 %, `columns` 10 %). This wraps the client so that a plain SELECT outside a
 * transaction — what drizzle's queries and the services' own reads send — runs on the
 * process's read connection (`LocalReader`: statements prepared once and kept, `query_only`),
 * and answers a result of the same shape: rows whose columns are their own enumerable
 * properties by name and readable by index, `length` and the indexes not enumerable (so
 * drizzle's `Array.prototype.slice.call(row)` and `Object.keys(row)` both see what they see
 * on the client's rows). Everything else (writes, batches, transactions, PRAGMAs) goes to the
 * client as before. A committed write is seen by the next SELECT on the read connection at once
 * (each statement there is run to its end, so it reads the latest snapshot); a transaction's
 * own reads run on the transaction's connection, never here.
 *
 * Integers come as JavaScript numbers (the client's default `intMode: "number"` does the
 * same, though it throws where the driver here would round an integer beyond 2^53: no column
 * of the register holds one); BLOBs as `ArrayBuffer`, as the client answers them.
 */
export function keepSelects(client: Client, reader: () => LocalReader): Client {
	const bound = new Map<PropertyKey, unknown>();
	const execute = async (stmt: InStatement): Promise<ResultSet> => {
		const sql = typeof stmt === 'string' ? stmt : stmt.sql;
		const args = typeof stmt === 'string' ? [] : stmt.args;
		if (!isSelect(sql) || (args !== undefined && !Array.isArray(args))) return client.execute(stmt);
		const { columns, rows } = reader().select(sql, (args ?? []) as unknown[]);
		return resultSet(columns, rows);
	};
	return new Proxy(client, {
		get(target, prop) {
			if (prop === 'execute') return execute;
			const value = Reflect.get(target, prop, target);
			if (typeof value !== 'function') return value;
			let fn = bound.get(prop);
			if (!fn) bound.set(prop, (fn = value.bind(target)));
			return fn;
		}
	});
}

/** Whether a statement is a plain SELECT (its first word, read without a regular expression). */
export function isSelect(sql: string): boolean {
	let i = 0;
	while (
		i < sql.length &&
		(sql[i] === ' ' || sql[i] === '\n' || sql[i] === '\t' || sql[i] === '\r')
	)
		i++;
	if (sql.length - i < 7) return false;
	const word = sql.slice(i, i + 6).toLowerCase();
	const next = sql[i + 6];
	return word === 'select' && (next === ' ' || next === '\n' || next === '\t' || next === '\r');
}

const rowClasses = new Map<string, new (values: unknown[]) => Row>();
/** Row shapes kept (one per distinct list of column names; beyond it each result makes its own). */
const MAX_ROW_CLASSES = 1024;

/** A row class for these columns: named values as own properties, indexes on the prototype. */
function rowClass(columns: string[]): new (values: unknown[]) => Row {
	const key = columns.join('\u0000');
	let cls = rowClasses.get(key);
	if (cls) return cls;
	// The first column of a name gives the named value (as the client does).
	const named: [string, number][] = [];
	const seen = new Set<string>();
	columns.forEach((c, i) => {
		if (!seen.has(c)) named.push([c, i]);
		seen.add(c);
	});
	class KeptRow {
		#values: unknown[];
		constructor(values: unknown[]) {
			this.#values = values;
			const self = this as unknown as Record<string, unknown>;
			for (const [name, i] of named) self[name] = values[i];
		}
		static valuesOf(row: KeptRow) {
			return row.#values;
		}
	}
	Object.defineProperty(KeptRow.prototype, 'length', { value: columns.length });
	for (let i = 0; i < columns.length; i++)
		Object.defineProperty(KeptRow.prototype, i, {
			get(this: KeptRow) {
				return KeptRow.valuesOf(this)[i];
			}
		});
	cls = KeptRow as unknown as new (values: unknown[]) => Row;
	if (rowClasses.size < MAX_ROW_CLASSES) rowClasses.set(key, cls);
	return cls;
}

function resultSet(columns: string[], raw: unknown[][]): ResultSet {
	const Cls = rowClass(columns);
	const rows = raw.map((values) => {
		for (let i = 0; i < values.length; i++) {
			const v = values[i];
			// BLOBs as the client answers them.
			if (typeof v === 'object' && v !== null && Buffer.isBuffer(v))
				values[i] = v.buffer.slice(v.byteOffset, v.byteOffset + v.byteLength);
		}
		return new Cls(values);
	});
	return {
		columns,
		columnTypes: columns.map(() => ''),
		rows,
		rowsAffected: 0,
		lastInsertRowid: undefined,
		toJSON() {
			return {
				columns,
				columnTypes: this.columnTypes,
				rows,
				rowsAffected: 0,
				lastInsertRowid: null
			};
		}
	};
}
