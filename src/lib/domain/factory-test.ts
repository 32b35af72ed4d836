/**
 * End-of-line factory test of a module: internal resistance from a two-step pulse and
 * the pass/fail verdict against a model's test limits. Pure functions; the limits come
 * from the model (`TestLimits` in ./model).
 */
import type { TestLimits } from './model';

/** Voltages and currents of the two steps of the pulse (discharge currents, positive). */
export interface TwoPulseReading {
	/** Voltage at the end of the first, small step (V). */
	u1V: number;
	/** Current of the first step (A); IEC 61960-3 uses 0.2 I_t for 10 s. */
	i1A: number;
	/** Voltage at the end of the second, large step (V). */
	u2V: number;
	/** Current of the second step (A); IEC 61960-3 uses 1.0 I_t for 1 s. */
	i2A: number;
}

/**
 * DC internal resistance in mΩ by the two-step pulse of IEC 61960-3 / IEC 62620:
 * R_dc = (U1 − U2) / (I2 − I1). The state-of-charge precondition (about 50 %) is the
 * rig's concern, not this function's (from memory, see docs/references.md §3).
 *
 * Example (docs/references.md §3): U1 3.300 V at 56 A, U2 3.244 V at 280 A → 0.250 mΩ.
 *
 * @throws RangeError when a value is not a finite number, when I2 is not above I1 (the
 *   formula divides by I2 − I1) or when U2 is above U1, which would give a negative
 *   resistance and means the columns are swapped or the pulse was a charge pulse.
 */
export function dcirTwoPulse({ u1V, i1A, u2V, i2A }: TwoPulseReading): number {
	for (const [name, v] of [
		['U1', u1V],
		['I1', i1A],
		['U2', u2V],
		['I2', i2A]
	] as const) {
		if (!Number.isFinite(v)) throw new RangeError(`${name} must be a number; got ${v}`);
	}
	if (!(i2A > i1A)) {
		throw new RangeError(
			`The second pulse current I2 (${i2A} A) must be higher than the first, I1 (${i1A} A)`
		);
	}
	if (u2V > u1V) {
		throw new RangeError(
			`U2 (${u2V} V) is above U1 (${u1V} V): the voltage must sag under the higher current; check that the columns are not swapped`
		);
	}
	const mohm = ((u1V - u2V) / (i2A - i1A)) * 1000;
	// Round away the binary floating-point noise (3.300 − 3.244 is 0.05600000000000005);
	// 1e-6 mΩ is far below any rig's resolution.
	return Math.round(mohm * 1e6) / 1e6;
}

/** The four measured values a verdict needs; a stored result may carry more fields. */
export interface MeasuredValues {
	capacityAh: number;
	dcirMohm: number;
	cellSpreadMv: number;
	insulationMohm: number;
}

export type TestCheck = 'capacity' | 'dcir' | 'cell_spread' | 'insulation';

export interface TestFailure {
	check: TestCheck;
	/** A full sentence with numbers and units, ready to show to a person. */
	message: string;
	value: number;
	limit: number;
}

export interface TestVerdict {
	outcome: 'pass' | 'fail';
	failures: TestFailure[];
}

interface CheckSpec {
	check: TestCheck;
	label: string;
	unit: string;
	kind: 'min' | 'max';
	/** Fewest decimals shown; more are added when value and limit would print alike. */
	decimals: number;
	value: (r: MeasuredValues) => number;
	limit: (l: TestLimits) => number;
}

const CHECKS: CheckSpec[] = [
	{
		check: 'capacity',
		label: 'Capacity',
		unit: 'Ah',
		kind: 'min',
		decimals: 1,
		value: (r) => r.capacityAh,
		limit: (l) => l.minCapacityAh
	},
	{
		check: 'dcir',
		label: 'DC internal resistance',
		unit: 'mΩ',
		kind: 'max',
		decimals: 1,
		value: (r) => r.dcirMohm,
		limit: (l) => l.maxDcirMohm
	},
	{
		check: 'cell_spread',
		label: 'Cell voltage spread',
		unit: 'mV',
		kind: 'max',
		decimals: 0,
		value: (r) => r.cellSpreadMv,
		limit: (l) => l.maxCellSpreadMv
	},
	{
		check: 'insulation',
		label: 'Insulation resistance',
		unit: 'MΩ',
		kind: 'min',
		decimals: 1,
		value: (r) => r.insulationMohm,
		limit: (l) => l.minInsulationMohm
	}
];

/**
 * Format a value and its limit with the same number of decimals: at least `min`, up to 3
 * so that both print exactly (a rounded value could seem to pass: 0.25 must not read
 * "0.3"), and beyond that only while the two would still print alike.
 */
function formatPair(value: number, limit: number, min: number): [string, string] {
	let d = min;
	while (d < 3 && !(exactAt(value, d) && exactAt(limit, d))) d++;
	while (d < 6 && value.toFixed(d) === limit.toFixed(d)) d++;
	return [value.toFixed(d), limit.toFixed(d)];
}

/** True when `x` is shown exactly with `d` decimals. */
function exactAt(x: number, d: number): boolean {
	return Math.abs(Number(x.toFixed(d)) - x) < 1e-9;
}

/**
 * Verdict of one factory test against the model's limits. A value equal to its limit
 * passes (minimums and maximums are inclusive). A value that is missing or not a
 * number fails, so a broken import can never pass a module.
 */
export function evaluateResult<T extends MeasuredValues>(
	result: T,
	limits: TestLimits
): TestVerdict {
	const failures: TestFailure[] = [];
	for (const c of CHECKS) {
		const value = c.value(result);
		const limit = c.limit(limits);
		if (!Number.isFinite(value)) {
			failures.push({
				check: c.check,
				value,
				limit,
				message: `${c.label} is missing or not a number`
			});
			continue;
		}
		const ok = c.kind === 'min' ? value >= limit : value <= limit;
		if (ok) continue;
		const [v, l] = formatPair(value, limit, c.decimals);
		const message =
			c.kind === 'min'
				? `${c.label} ${v} ${c.unit} below the ${l} ${c.unit} minimum`
				: `${c.label} ${v} ${c.unit} above the ${l} ${c.unit} limit`;
		failures.push({ check: c.check, value, limit, message });
	}
	return { outcome: failures.length === 0 ? 'pass' : 'fail', failures };
}
