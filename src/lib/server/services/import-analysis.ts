import type { Db } from '$lib/server/db';
import { moduleModels } from '$lib/server/db/schema';
import { scanFactoryCsv, type RowError, type ScannedRow } from '$lib/domain/factory-csv';
import { evaluateResult } from '$lib/domain/factory-test';
import { parseSerial } from '$lib/domain/serial';
import { STATE_LABELS } from '$lib/module-states';
import { InvalidInputError } from '$lib/server/errors';
import { sqlStateList, statesFrom } from '$lib/domain/module-lifecycle';

/** States in which a module is still in the workshop and may receive (re)test results. */
export const TESTABLE_STATES: ReadonlySet<string> = new Set(statesFrom('factoryTest'));
export const TESTABLE_SQL = `(${sqlStateList(statesFrom('factoryTest'))})`;
const PREVIEW_ROWS = 200;

export interface PreviewRow {
	row: number;
	serial: string;
	testedAt: string;
	capacityAh: number;
	dcirMohm: number;
	outcome: 'pass' | 'fail';
	failures: string[];
}

/** What a file comes to; its accepted rows went to the plan slices (`PlanChunk`) as they were judged. */
export interface Analysis {
	rowsTotal: number;
	accepted: number;
	passed: number;
	errors: RowError[];
	duplicates: { row: number; serial: string }[];
	preview: PreviewRow[];
	chunks: number;
}

/**
 * One slice of the commit plan: `rows` the insert-ready JSON array of up to `CHUNK_ROWS`
 * accepted rows (one array per row, in PLAN_COLUMNS order), `states` the JSON array of
 * [module id, outcome, tested at] of each module's latest result among them (a later row wins
 * a tie, as across slices, which the commit applies in `seq` order).
 */
export interface PlanChunk {
	seq: number;
	/** UTF-8 bytes of the JSON text (as `SliceBytes` makes them), or the text itself. */
	rows: Uint8Array | string;
	states: string;
}

/** Rows per plan slice: the commit's longest statement stores this many (tens of ms). */
export const CHUNK_ROWS = 1000;

/** The columns each accepted row fills, in the order of its JSON array (import id apart). */
export const PLAN_COLUMNS = [
	'module_id',
	'row_key',
	'tested_at',
	'capacity_ah',
	'energy_wh',
	'dcir_mohm',
	'dcir_source',
	'ocv_v',
	'cell_spread_mv',
	'insulation_mohm',
	'ambient_c',
	'rig',
	'operator',
	'outcome',
	'failures'
] as const;

type Held = Omit<ScannedRow, 'pulse'> & { row: number };
const str = (s: string | null) => (s === null ? 'null' : JSON.stringify(s));
const num = (n: number | null) => (n === null ? 'null' : String(n));
/** A passing row's failures, `[]` as a JSON string inside the row's array (made once, not per row). */
const NO_FAILURES = JSON.stringify('[]');
/** Lets other requests run between slices of a large file. */
const breathe = () => new Promise<void>((r) => setImmediate(r));

/** A plan slice's first buffer: 1,000 usual rows come to about 160 KB. */
const SLICE_BYTES = 256 * 1024;

/**
 * A plan slice's JSON array as UTF-8 bytes in one buffer, each row's text written into it as
 * soon as it is made: the slice's row strings are garbage at once (not kept in an array until
 * the slice is full, through young-generation collections), and the bytes move to the import
 * writer's thread without a copy (`import-writer.ts` transfers byte arguments) instead of
 * being cloned into its heap as a string of ~160 KB per slice.
 */
export class SliceBytes {
	#buf = Buffer.allocUnsafeSlow(SLICE_BYTES);
	#at = 0;
	#rows = 0;

	get rows(): number {
		return this.#rows;
	}

	/** Appends one element (its JSON text) to the array. */
	add(json: string): void {
		// UTF-8 takes at most 3 bytes per UTF-16 code unit; 2 more for the separator and the end.
		const need = this.#at + json.length * 3 + 2;
		if (need > this.#buf.length) {
			const bigger = Buffer.allocUnsafeSlow(Math.max(need, this.#buf.length * 2));
			this.#buf.copy(bigger, 0, 0, this.#at);
			this.#buf = bigger;
		}
		this.#buf[this.#at++] = this.#rows === 0 ? 0x5b : 0x2c; // '[' or ','
		this.#at += this.#buf.write(json, this.#at, 'utf8');
		this.#rows++;
	}

	/**
	 * The array's bytes (`[]` when empty), in a buffer of their own and of their exact size (so
	 * it can be transferred whole); the next slice's rows reuse this one's buffer.
	 */
	take(): Uint8Array {
		if (this.#rows === 0) this.#buf[this.#at++] = 0x5b;
		this.#buf[this.#at++] = 0x5d; // ']'
		const bytes = new Uint8Array(this.#at);
		bytes.set(this.#buf.subarray(0, this.#at));
		this.#at = 0;
		this.#rows = 0;
		return bytes;
	}
}

/**
 * Reads a rig file and judges every row in one pass, slice by slice: file-level problems
 * throw; row problems (unknown serial, not built, left the workshop, bad values) become
 * errors with the row number; rows already stored are duplicates (looked up only for modules
 * that have a result); the rest are evaluated against their model's limits and written
 * straight into the insert-ready JSON. Each slice's
 * serials and row keys are looked up in one query each, with the values as one JSON
 * parameter and the answer as one JSON value (no per-parameter or per-row cost).
 */
export async function analyseFactoryFile(
	db: Db,
	content: string,
	now: Date,
	emit: (chunk: PlanChunk) => void | Promise<void>
): Promise<Analysis> {
	const models = new Map((await db.select().from(moduleModels)).map((m) => [m.id, m]));
	const errors: RowError[] = [];
	const duplicates: Analysis['duplicates'] = [];
	const preview: PreviewRow[] = [];
	const parts = new SliceBytes();
	let latest = new Map<number, { ms: number; pass: boolean }>();
	let accepted = 0;
	let seq = 0;
	// A promise from `emit` (its writes fell behind) is waited for before the next slice.
	const writes: { behind?: Promise<void> } = {};
	const flush = () => {
		if (parts.rows === 0) return;
		const states: string[] = [];
		for (const [id, l] of latest) states.push(`[${id},"${l.pass ? 'pass' : 'fail'}",${l.ms}]`);
		accepted += parts.rows;
		const wait = emit({ seq: seq++, rows: parts.take(), states: `[${states.join(',')}]` });
		if (wait) writes.behind = wait;
		latest = new Map();
	};
	let passed = 0;
	let held: Held[] = [];
	let serialColumn = 'serial';

	const judge = async (slice: Held[]) => {
		if (slice.length === 0) return;
		const found = await db.$client.execute({
			sql: `SELECT json_group_array(json_array(m.id, m.serial, m.state, m.model_id, m.tested_at IS NOT NULL)) AS rows
			      FROM json_each(?) AS j JOIN modules AS m ON m.serial = j.value`,
			args: [JSON.stringify([...new Set(slice.map((h) => h.serialKey))])]
		});
		const bySerial = new Map(
			(JSON.parse(found.rows[0].rows as string) as [number, string, string, number, 0 | 1][]).map(
				([id, serial, state, modelId, tested]) => [serial, { id, state, modelId, tested }]
			)
		);
		// Only a module with a result can have this row stored already: every stored result
		// sets its module's tested_at (the commit's state update, in the same transaction; the
		// seeds alike) and nothing clears it. A file of first tests (the usual one) needs no
		// look-up of its row keys at all. The commit's own NOT EXISTS stays the guarantee.
		const keys: string[] = [];
		for (const h of slice) if (bySerial.get(h.serialKey)?.tested) keys.push(h.key);
		const stored = new Set<string>();
		if (keys.length > 0) {
			const storedRows = await db.$client.execute({
				sql: `SELECT json_group_array(t.row_key) AS keys FROM json_each(?) AS j JOIN factory_tests AS t ON t.row_key = j.value`,
				args: [JSON.stringify(keys)]
			});
			for (const k of JSON.parse(storedRows.rows[0].keys as string) as string[]) stored.add(k);
		}
		for (const h of slice) {
			const serial = h.serialKey;
			const mod = bySerial.get(serial);
			if (!mod) {
				const p = parseSerial(serial);
				errors.push({
					row: h.row,
					column: serialColumn,
					message: p.ok
						? `Unknown serial ${serial}: no such module in the register.`
						: `“${h.serial}” is not a valid serial: ${p.reason}.`
				});
				continue;
			}
			if (mod.state === 'allocated') {
				errors.push({
					row: h.row,
					column: serialColumn,
					message: `${serial} is not built yet: register its build at the bench first.`
				});
				continue;
			}
			if (!TESTABLE_STATES.has(mod.state)) {
				errors.push({
					row: h.row,
					column: serialColumn,
					message: `${serial} has left the workshop (${STATE_LABELS[mod.state]}); factory results can only be added before shipping.`
				});
				continue;
			}
			if (stored.has(h.key)) {
				duplicates.push({ row: h.row, serial });
				continue;
			}
			const verdict = evaluateResult(h, models.get(mod.modelId)!);
			const pass = verdict.outcome === 'pass';
			if (pass) passed++;
			const failures = verdict.failures.map(({ check, message }) => ({ check, message }));
			parts.add(
				`[${mod.id},${str(h.key)},${h.testedAtMs},${h.capacityAh},${num(h.energyWh)},${h.dcirMohm},"${h.dcirSource}",${num(h.ocvV)},${h.cellSpreadMv},${h.insulationMohm},${num(h.ambientC)},${str(h.rig)},${str(h.operator)},"${verdict.outcome}",${pass ? NO_FAILURES : str(JSON.stringify(failures))}]`
			);
			const last = latest.get(mod.id);
			if (!last || last.ms <= h.testedAtMs) latest.set(mod.id, { ms: h.testedAtMs, pass });
			if (parts.rows >= CHUNK_ROWS) flush();
			if (preview.length < PREVIEW_ROWS)
				preview.push({
					row: h.row,
					serial,
					testedAt: new Date(h.testedAtMs).toISOString(),
					capacityAh: h.capacityAh,
					dcirMohm: h.dcirMohm,
					outcome: verdict.outcome,
					failures: failures.map((f) => f.message)
				});
		}
	};

	const scan = scanFactoryCsv(content, now, (row, v) => {
		// The scanner reuses `v` for the next row: keep a copy of what the judgement needs.
		held.push({
			row,
			serial: v.serial,
			serialKey: v.serialKey,
			key: v.key,
			testedAtMs: v.testedAtMs,
			capacityAh: v.capacityAh,
			energyWh: v.energyWh,
			dcirMohm: v.dcirMohm,
			dcirSource: v.dcirSource,
			ocvV: v.ocvV,
			cellSpreadMv: v.cellSpreadMv,
			insulationMohm: v.insulationMohm,
			ambientC: v.ambientC,
			rig: v.rig,
			operator: v.operator
		});
	});
	let step = scan.next();
	while (!step.done) {
		const slice = held;
		held = [];
		await judge(slice);
		if (writes.behind) await writes.behind;
		writes.behind = undefined;
		await breathe();
		step = scan.next();
	}
	const file = step.value;
	if (!file.ok) throw new InvalidInputError(file.error);
	serialColumn = file.headerMap.serial ?? 'serial';
	await judge(held);
	for (const e of errors) if (e.column === 'serial') e.column = serialColumn;
	errors.push(...file.errors);
	errors.sort((a, b) => a.row - b.row);
	flush();
	if (writes.behind) await writes.behind;
	return { rowsTotal: file.rowsTotal, accepted, passed, errors, duplicates, preview, chunks: seq };
}
