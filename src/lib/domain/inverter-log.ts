/**
 * Reads an inverter log exported as CSV (RFC 4180) and sums the battery's
 * discharge energy for the energy-basis equivalent full cycles of a warranty claim.
 * Pure: the text comes in, a summary goes out.
 */
import Papa from 'papaparse';
import { readDecimal } from './decimal';

/** A fatal problem with the file or the mapping; row-level problems go in `problems`. */
export class InverterLogError extends Error {
	override name = 'InverterLogError';
}

export interface ColumnGuess {
	timestamp?: string;
	dischargeEnergyWh?: string;
	dischargeEnergyKWh?: string;
	chargeEnergyWh?: string;
	chargeEnergyKWh?: string;
	cellTempC?: string;
	maxCellTempC?: string;
	/** Guessed from the energy column's name ("total", "lifetime" → cumulative). */
	energyKind?: 'cumulative' | 'interval';
}

export interface LogMapping {
	timestampColumn: string;
	energyColumn: string;
	energyUnit: 'Wh' | 'kWh';
	energyKind: 'cumulative' | 'interval';
	tempColumn?: string;
}

export interface LogSummary {
	/** Data rows in the file (blank lines not counted). */
	rows: number;
	/** Timestamps as written in the file, of the first and last rows read. */
	firstAt: string | null;
	lastAt: string | null;
	/** Discharge energy in Wh (3 decimals); null when no row had a usable value. */
	throughputWh: number | null;
	/** Plain mean of the readings (not time-weighted), 2 decimals. */
	avgTempC: number | null;
	maxTempC: number | null;
	/**
	 * Hours spent at each temperature (0.1 °C steps, coolest first): each reading holds until
	 * the next one, the last for the log's usual interval. The warranty assessment takes its
	 * mean kinetic temperature. Empty when the timestamps are not ISO 8601.
	 */
	temperatureProfile: { tempC: number; hours: number }[];
	problems: string[];
}

/** How many problems of one kind are listed row by row before they are only counted. */
export const PROBLEMS_PER_KIND = 10;
/** Header cells longer than this are never suggested as a column. */
export const MAX_HEADER_LENGTH = 200;

const normalise = (h: string) =>
	h
		.toLowerCase()
		.replace(/°/g, ' deg ')
		.replace(/[^a-z0-9]+/g, ' ')
		.trim();

const words = (h: string) => normalise(h).split(' ');

/** Energy unit from a header such as "E_Discharge_Total(kWh)" or "battery discharge [Wh]". */
function energyUnitOf(h: string): 'Wh' | 'kWh' | null {
	const w = words(h);
	if (w.includes('kwh') || /kwh/.test(normalise(h))) return 'kWh';
	if (w.includes('wh') || /(^|[^k])wh\b/.test(normalise(h))) return 'Wh';
	return null;
}

const isDischarge = (n: string) =>
	/dis ?ch(ar)?g|discharge|\bdchg\b|\bbat(tery)? out\b|\bexport/.test(n);
const isCharge = (n: string) => !isDischarge(n) && /\bch(ar)?g|\bcharge|\bbat(tery)? in\b/.test(n);
const isEnergy = (n: string) => /energy|kwh|\bwh\b|\be\b/.test(n) || /wh\b/.test(n);

/**
 * Suggests which columns hold what, by name. Only a suggestion: the person uploading the
 * log confirms the mapping, so a wrong guess costs one click, a missing one none.
 */
export function detectColumns(headers: string[]): ColumnGuess {
	const guess: ColumnGuess = {};
	const cleaned = headers.map((h) => h.replace(/^\uFEFF/, '').trim());
	for (const h of cleaned) {
		// No column name is this long; a longer header is not guessed at (and no pattern runs on it).
		if (h.length > MAX_HEADER_LENGTH) continue;
		const n = normalise(h);
		if (!n) continue;
		if (!guess.timestamp && /\b(timestamp|datetime|date ?time|time|date|ts)\b/.test(n)) {
			guess.timestamp = h;
			continue;
		}
		if (isEnergy(n)) {
			const unit = energyUnitOf(h);
			if (unit && isDischarge(n)) {
				const key = unit === 'kWh' ? 'dischargeEnergyKWh' : 'dischargeEnergyWh';
				if (!guess.dischargeEnergyKWh && !guess.dischargeEnergyWh) {
					guess[key] = h;
					if (/\b(total|cumulative|lifetime|counter|acc|accumulated|today|daily|day)\b/.test(n))
						guess.energyKind = 'cumulative';
					else if (/\b(interval|delta|period)\b/.test(n)) guess.energyKind = 'interval';
				}
				continue;
			}
			if (unit && isCharge(n)) {
				const key = unit === 'kWh' ? 'chargeEnergyKWh' : 'chargeEnergyWh';
				if (!guess.chargeEnergyKWh && !guess.chargeEnergyWh) guess[key] = h;
				continue;
			}
		}
		const compact = n.replace(/ /g, '');
		if (
			/temp/.test(compact) &&
			/cell|bat|module|bms|pack/.test(compact) &&
			!/inverter|inv|ambient|heatsink|igbt|pcb|mosfet|\bmos\b/.test(n) &&
			!/degf|fahrenheit/.test(compact)
		) {
			if (/max|highest|peak/.test(compact)) guess.maxCellTempC ??= h;
			else if (!/min|lowest/.test(compact)) guess.cellTempC ??= h;
		}
	}
	return guess;
}

/**
 * A numeric cell by the one decimal rule ("12.5", "-3", "12,5" as in semicolon exports);
 * machine exponent notation ("1.5E3") is read as well, since loggers write it.
 */
function readNumber(raw: string | undefined): number | null {
	const d = readDecimal(raw);
	if (d !== 'invalid') return d;
	const s = (raw ?? '').trim();
	if (s.length > 40 || !/[eE]/.test(s)) return null;
	const n = Number(s);
	return Number.isFinite(n) ? n : null;
}

const ISO_LIKE = /^\d{4}-\d{2}-\d{2}([ T]\d{2}:\d{2}(:\d{2}(\.\d+)?)?)?$/;

/** Milliseconds of an ISO-like local timestamp (read as UTC: only differences matter), or null. */
function isoMs(ts: string): number | null {
	if (ts.length > 40 || !ISO_LIKE.test(ts)) return null;
	const t = Date.parse(`${ts.replace(' ', 'T')}${ts.length > 10 ? '' : 'T00:00'}Z`);
	return Number.isFinite(t) ? t : null;
}

/** A gap this many times the usual interval is counted as one usual interval (logger off). */
export const GAP_FACTOR = 10;

/** Time at each temperature from timed readings; see LogSummary.temperatureProfile. */
export function temperatureProfileOf(readings: readonly { at: number; tempC: number }[]): {
	profile: { tempC: number; hours: number }[];
	gaps: number;
} {
	if (readings.length < 2) return { profile: [], gaps: 0 };
	const steps: number[] = [];
	for (let i = 0; i + 1 < readings.length; i++) {
		const d = readings[i + 1].at - readings[i].at;
		if (d > 0) steps.push(d);
	}
	if (!steps.length) return { profile: [], gaps: 0 };
	const sorted = [...steps].sort((a, b) => a - b);
	const usual = sorted[Math.floor(sorted.length / 2)];
	const bins = new Map<number, number>();
	let gaps = 0;
	readings.forEach((r, i) => {
		let d = i + 1 < readings.length ? readings[i + 1].at - r.at : usual;
		if (d <= 0) return;
		if (d > GAP_FACTOR * usual) {
			d = usual;
			gaps++;
		}
		const key = Math.round(r.tempC * 10);
		bins.set(key, (bins.get(key) ?? 0) + d / 3_600_000);
	});
	const profile = [...bins.entries()]
		.sort(([a], [b]) => a - b)
		.map(([k, h]) => ({ tempC: k / 10, hours: Math.round(h * 10_000) / 10_000 }));
	return { profile, gaps };
}

class ProblemList {
	private kinds = new Map<
		string,
		{ listed: string[]; more: number; tail: (n: number) => string }
	>();
	add(kind: string, text: string, tail: (n: number) => string) {
		let k = this.kinds.get(kind);
		if (!k) this.kinds.set(kind, (k = { listed: [], more: 0, tail }));
		if (k.listed.length < PROBLEMS_PER_KIND) k.listed.push(text);
		else k.more++;
	}
	toArray(): string[] {
		const out: string[] = [];
		for (const k of this.kinds.values()) {
			out.push(...k.listed);
			if (k.more > 0) out.push(k.tail(k.more));
		}
		return out;
	}
}

/**
 * Summarises a log. Row numbers in problems count the header as row 1, as a spreadsheet
 * shows them. Cumulative counters: throughput is the rise of the counter; a drop is taken
 * as a counter reset and starts a new segment, each adding its own rise (energy between the
 * last reading before a reset and the reset itself is not known, so this can only
 * under-count, which favours the owner). Interval values are summed.
 */
export function summariseLog(text: string, mapping: LogMapping): LogSummary {
	const body = text.replace(/^\uFEFF/, '');
	if (body.trim() === '') throw new InverterLogError('The file is empty.');

	const parsed = Papa.parse<string[]>(body, { header: false, skipEmptyLines: false });
	const table = parsed.data;
	const headers = (table[0] ?? []).map((h) => h.trim());
	const columnIndex = (name: string, role: string) => {
		const i = headers.indexOf(name.trim());
		if (i < 0)
			throw new InverterLogError(
				`The ${role} column "${name}" is not in the file. Columns found: ${headers.map((h) => `"${h}"`).join(', ')}.`
			);
		return i;
	};
	const tsCol = columnIndex(mapping.timestampColumn, 'timestamp');
	const eCol = columnIndex(mapping.energyColumn, 'energy');
	const tCol = mapping.tempColumn ? columnIndex(mapping.tempColumn, 'temperature') : null;
	const scale = mapping.energyUnit === 'kWh' ? 1000 : 1;

	const problems = new ProblemList();
	for (const e of parsed.errors) {
		if (
			e.code === 'UndetectableDelimiter' ||
			e.code === 'TooFewFields' ||
			e.code === 'TooManyFields'
		)
			continue;
		const where = typeof e.row === 'number' ? `Row ${e.row + 1}` : 'The file';
		problems.add('csv', `${where}: ${e.message}.`, (n) => `… and ${n} more CSV syntax problems.`);
	}

	let rows = 0;
	let firstAt: string | null = null;
	let lastAt: string | null = null;
	let previousIso: string | null = null;
	let energyRows = 0;
	let total = 0;
	let segmentStart: number | null = null;
	let last: number | null = null;
	let tempSum = 0;
	let tempCount = 0;
	let tempMax: number | null = null;
	const timed: { at: number; tempC: number }[] = [];
	let untimedTemps = 0;

	for (let i = 1; i < table.length; i++) {
		const cells = table[i];
		if (cells.every((c) => c.trim() === '')) continue;
		rows++;
		const rowNo = i + 1;

		const ts = (cells[tsCol] ?? '').trim();
		if (ts === '')
			problems.add(
				'ts',
				`Row ${rowNo}: no timestamp.`,
				(n) => `… and ${n} more rows without a timestamp.`
			);
		else {
			firstAt ??= ts;
			lastAt = ts;
			if (ISO_LIKE.test(ts)) {
				if (previousIso !== null && ts.replace('T', ' ') < previousIso.replace('T', ' '))
					problems.add(
						'order',
						`Row ${rowNo}: ${ts} is earlier than the row before; cumulative throughput assumes the rows are in time order.`,
						(n) => `… and ${n} more rows out of time order.`
					);
				previousIso = ts;
			}
		}

		const raw = cells[eCol];
		const value = readNumber(raw);
		if (value === null) {
			const shown = (raw ?? '').trim();
			problems.add(
				'energy',
				shown === ''
					? `Row ${rowNo}: no energy value.`
					: `Row ${rowNo}: energy value "${shown}" is not a number.`,
				(n) => `… and ${n} more rows with a missing or non-numeric energy value.`
			);
		} else if (mapping.energyKind === 'interval') {
			if (value < 0)
				problems.add(
					'negative',
					`Row ${rowNo}: negative interval energy ${raw?.trim()} ${mapping.energyUnit} was left out.`,
					(n) => `… and ${n} more negative interval values left out.`
				);
			else {
				total += value * scale;
				energyRows++;
			}
		} else {
			energyRows++;
			if (segmentStart === null) segmentStart = value;
			else if (last !== null && value < last) {
				total += (last - segmentStart) * scale;
				problems.add(
					'reset',
					`Row ${rowNo}: the energy counter dropped from ${last} to ${value} ${mapping.energyUnit}; taken as a reset and counted as a new segment (energy just before the reset is not known).`,
					(n) => `… and ${n} more counter resets.`
				);
				segmentStart = value;
			}
			last = value;
		}

		if (tCol !== null) {
			const rawT = cells[tCol];
			const t = readNumber(rawT);
			if (t === null) {
				if ((rawT ?? '').trim() !== '')
					problems.add(
						'temp',
						`Row ${rowNo}: temperature "${rawT?.trim()}" is not a number.`,
						(n) => `… and ${n} more rows with a non-numeric temperature.`
					);
			} else {
				tempSum += t;
				tempCount++;
				tempMax = tempMax === null ? t : Math.max(tempMax, t);
				const at = isoMs(ts);
				if (at === null) untimedTemps++;
				else timed.push({ at, tempC: t });
			}
		}
	}

	if (rows === 0) throw new InverterLogError('The file has a header row but no data rows.');
	if (mapping.energyKind === 'cumulative' && segmentStart !== null && last !== null)
		total += (last - segmentStart) * scale;

	const out = problems.toArray();
	if (mapping.energyKind === 'cumulative' && energyRows === 1)
		out.push('Only one energy reading: a cumulative counter needs two to show any throughput.');
	if (energyRows === 0)
		out.push(
			`No row has a usable value in "${mapping.energyColumn}", so the throughput is unknown.`
		);
	if (tCol !== null && tempCount === 0)
		out.push(`No row has a usable temperature in "${mapping.tempColumn}".`);
	timed.sort((a, b) => a.at - b.at);
	const { profile, gaps } =
		untimedTemps > 0 ? { profile: [], gaps: 0 } : temperatureProfileOf(timed);
	if (tempCount > 0 && untimedTemps > 0)
		out.push(
			'Some timestamps are not written YYYY-MM-DD hh:mm, so the temperatures cannot be weighted by time; the plain average is used for the derating.'
		);
	if (gaps > 0)
		out.push(
			`${gaps} ${gaps === 1 ? 'gap' : 'gaps'} in the log longer than ${GAP_FACTOR} usual intervals ${gaps === 1 ? 'was' : 'were'} counted as one interval at the temperature before ${gaps === 1 ? 'it' : 'them'} (the logger was probably off).`
		);

	return {
		rows,
		firstAt,
		lastAt,
		throughputWh: energyRows === 0 ? null : Math.round(total * 1000) / 1000,
		avgTempC: tempCount === 0 ? null : Math.round((tempSum / tempCount) * 100) / 100,
		maxTempC: tempMax,
		temperatureProfile: profile,
		problems: out
	};
}
