import { inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { factoryTests, moduleModels, modules } from '$lib/server/db/schema';
import { validateFactoryCsv, rowKey, type FactoryTestRow, type RowError } from '$lib/domain/factory-csv';
import { evaluateResult, type TestFailure } from '$lib/domain/factory-test';
import { parseSerial } from '$lib/domain/serial';
import { STATE_LABELS } from '$lib/module-states';
import { InvalidInputError } from '$lib/server/errors';

/** States in which a module is still in the workshop and may receive (re)test results. */
export const TESTABLE_STATES = new Set(['built', 'in_stock', 'test_failed']);

export interface AcceptedRow {
	row: number;
	moduleId: number;
	key: string;
	value: FactoryTestRow;
	outcome: 'pass' | 'fail';
	failures: Pick<TestFailure, 'check' | 'message'>[];
}

export interface Analysis {
	rowsTotal: number;
	accepted: AcceptedRow[];
	errors: RowError[];
	duplicates: { row: number; serial: string }[];
}

const CHUNK = 5000;

async function inChunks<T, R>(items: T[], fn: (chunk: T[]) => Promise<R[]>): Promise<R[]> {
	const out: R[] = [];
	for (let i = 0; i < items.length; i += CHUNK) out.push(...(await fn(items.slice(i, i + CHUNK))));
	return out;
}

/**
 * Reads a rig file and judges every row: file-level problems throw; row problems
 * (unknown serial, not built, left the workshop, bad values) become errors with the row
 * number; rows already stored are duplicates; the rest are evaluated against their model's limits.
 */
export async function analyseFactoryFile(db: Db, content: string, now: Date): Promise<Analysis> {
	const file = validateFactoryCsv(content, now);
	if (!file.ok) throw new InvalidInputError(file.error);
	const errors: RowError[] = [...file.errors];
	const serialColumn = file.headerMap.serial ?? 'serial';

	const serials = [...new Set(file.rows.map((r) => r.value.serial.toUpperCase()))];
	const found = await inChunks(serials, (chunk) =>
		db.select({ id: modules.id, serial: modules.serial, state: modules.state, modelId: modules.modelId }).from(modules).where(inArray(modules.serial, chunk))
	);
	const bySerial = new Map(found.map((m) => [m.serial, m]));
	const models = new Map((await db.select().from(moduleModels)).map((m) => [m.id, m]));

	const candidates: AcceptedRow[] = [];
	for (const { row, value } of file.rows) {
		const serial = value.serial.toUpperCase();
		const mod = bySerial.get(serial);
		if (!mod) {
			const p = parseSerial(serial);
			errors.push({ row, column: serialColumn, message: p.ok ? `Unknown serial ${serial}: no such module in the register.` : `“${value.serial}” is not a valid serial: ${p.reason}.` });
			continue;
		}
		if (mod.state === 'allocated') {
			errors.push({ row, column: serialColumn, message: `${serial} is not built yet: register its build at the bench first.` });
			continue;
		}
		if (!TESTABLE_STATES.has(mod.state)) {
			errors.push({ row, column: serialColumn, message: `${serial} has left the workshop (${STATE_LABELS[mod.state]}); factory results can only be added before shipping.` });
			continue;
		}
		const model = models.get(mod.modelId)!;
		const verdict = evaluateResult(value, model);
		const normalised = { ...value, serial };
		candidates.push({ row, moduleId: mod.id, key: rowKey(normalised), value: normalised, outcome: verdict.outcome, failures: verdict.failures.map(({ check, message }) => ({ check, message })) });
	}

	const stored = new Set(
		(await inChunks(candidates.map((c) => c.key), (chunk) => db.select({ key: factoryTests.rowKey }).from(factoryTests).where(inArray(factoryTests.rowKey, chunk)))).map((r) => r.key)
	);
	const accepted = candidates.filter((c) => !stored.has(c.key));
	const duplicates = candidates.filter((c) => stored.has(c.key)).map((c) => ({ row: c.row, serial: c.value.serial }));
	errors.sort((a, b) => a.row - b.row);
	return { rowsTotal: file.rows.length + new Set(file.errors.map((e) => e.row)).size, accepted, errors, duplicates };
}
