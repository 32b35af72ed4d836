import Database from 'libsql';
import type { Client } from '@libsql/client';

/** A row as an array of column values, in the order of the SELECT. */
export type ReaderRow = unknown[];
export type ReaderStatement = string | { sql: string; args?: unknown[] };

/**
 * The read-only connection the hot read paths use (`readerOf`): the session's user, the fleet,
 * traceability, the public record, the data version. `execute` answers rows as arrays.
 */
export interface Reader {
	execute(stmt: ReaderStatement): Promise<{ rows: ReaderRow[] }>;
}

/** Most prepared statements kept per connection (least recently used go first). */
const MAX_STATEMENTS = 512;

/**
 * A reader on a local SQLite file, straight on the `libsql` driver that `@libsql/client` itself
 * uses for `file:` URLs, with its prepared statements kept. Measured on this machine,
 * `@libsql/client`'s `execute` of `SELECT 1` costs ~230 µs of the event loop (a new prepare,
 * the columns read twice, each row turned into an object), the same statement prepared once
 * and run again ~12 µs; on a fleet request prepares were ~9 % of the server's CPU. Every
 * statement is run to its end (`all`), so none keeps a read snapshot open between requests:
 * each sees every commit made before it started, as a fresh statement would.
 */
export class LocalReader implements Reader {
	readonly #db: Database.Database;
	readonly #statements = new Map<string, Database.Statement>();
	readonly #columns = new Map<string, string[]>();

	constructor(path: string, { timeoutMs = 5000, cacheKiB = 65536 } = {}) {
		this.#db = new Database(path, { timeout: timeoutMs });
		// 64 MB of page cache (SQLite's default of 2,000 pages reads a 150 MB register through the
		// operating system page by page); this connection never writes.
		this.#db.exec(`PRAGMA cache_size = -${Math.trunc(cacheKiB)}`);
		this.#db.exec('PRAGMA query_only = 1');
	}

	#statement(sql: string): Database.Statement {
		let stmt = this.#statements.get(sql);
		if (stmt) {
			// Most recently used last: the first key is the one to drop.
			this.#statements.delete(sql);
		} else {
			stmt = this.#db.prepare(sql).raw(true);
			if (this.#statements.size >= MAX_STATEMENTS) {
				const first = this.#statements.keys().next().value!;
				this.#statements.delete(first);
				this.#columns.delete(first);
			}
		}
		this.#statements.set(sql, stmt);
		return stmt;
	}

	/** Rows of one statement (synchronous underneath, as every local SQLite call here is). */
	rows(sql: string, args: unknown[] = []): ReaderRow[] {
		return this.#statement(sql).all(args.map(toSql)) as ReaderRow[];
	}

	/** Rows of one statement and its columns' names (kept with the statement). */
	select(sql: string, args: unknown[] = []): { columns: string[]; rows: ReaderRow[] } {
		const stmt = this.#statement(sql);
		let columns = this.#columns.get(sql);
		if (!columns) {
			columns = stmt.columns().map((c) => c.name);
			this.#columns.set(sql, columns);
		}
		return { columns, rows: stmt.all(args.map(toSql)) as ReaderRow[] };
	}

	async execute(stmt: ReaderStatement): Promise<{ rows: ReaderRow[] }> {
		return typeof stmt === 'string'
			? { rows: this.rows(stmt) }
			: { rows: this.rows(stmt.sql, stmt.args) };
	}

	/** How many prepared statements are kept (for tests). */
	get statementCount(): number {
		return this.#statements.size;
	}

	close(): void {
		this.#statements.clear();
		this.#columns.clear();
		this.#db.close();
	}
}

/** Arguments as `@libsql/client` passes them on: booleans as 0/1, dates as epoch milliseconds. */
function toSql(value: unknown): unknown {
	if (typeof value === 'boolean') return value ? 1 : 0;
	if (value instanceof Date) return value.getTime();
	if (value === undefined) throw new TypeError('undefined cannot be passed to the database');
	return value;
}

/** A libSQL server (or `:memory:`): the client itself, rows as arrays. */
export function clientReader(client: Client): Reader {
	return {
		async execute(stmt) {
			const r = await client.execute(
				typeof stmt === 'string' ? stmt : { sql: stmt.sql, args: (stmt.args ?? []) as never }
			);
			return { rows: r.rows as unknown as ReaderRow[] };
		}
	};
}
