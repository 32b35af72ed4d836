/**
 * Reading the CSV files written by the end-of-line test rigs. Pure functions: the text is
 * passed in (already decoded), the clock is passed in as `now`, and looking serials up in
 * the register is the caller's business.
 *
 * Format: RFC 4180 (quoted fields, doubled inner quotes, CRLF or LF), with a UTF-8 BOM
 * allowed, `,` or `;` as delimiter and, in `;` files, a decimal comma — European rigs and
 * spreadsheets write "45,2" when the list separator is `;`.
 */
import Papa from 'papaparse';
import { dcirTwoPulse, type TwoPulseReading } from './factory-test';

export const COLUMNS = [
	'serial',
	'tested_at',
	'capacity_ah',
	'energy_wh',
	'dcir_mohm',
	'ocv_v',
	'cell_spread_mv',
	'insulation_mohm',
	'ambient_c',
	'rig',
	'operator',
	'pulse_u1_v',
	'pulse_i1_a',
	'pulse_u2_v',
	'pulse_i2_a'
] as const;
export type FactoryColumn = (typeof COLUMNS)[number];

export const REQUIRED_COLUMNS: readonly FactoryColumn[] = [
	'serial',
	'tested_at',
	'capacity_ah',
	'dcir_mohm',
	'cell_spread_mv',
	'insulation_mohm'
];
export const PULSE_COLUMNS = [
	'pulse_u1_v',
	'pulse_i1_a',
	'pulse_u2_v',
	'pulse_i2_a'
] as const satisfies readonly FactoryColumn[];

/**
 * Other names rigs and spreadsheets use, after normalisation (lower case, spaces and
 * hyphens as `_`, unit suffix in brackets removed). Kept small on purpose: a wrong guess
 * would put a value in the wrong column.
 */
const ALIASES: Record<string, FactoryColumn> = {
	serial_number: 'serial',
	serial_no: 'serial',
	sn: 'serial',
	module_serial: 'serial',
	tested: 'tested_at',
	test_time: 'tested_at',
	timestamp: 'tested_at',
	date_time: 'tested_at',
	datetime: 'tested_at',
	capacity: 'capacity_ah',
	discharge_capacity: 'capacity_ah',
	energy: 'energy_wh',
	discharge_energy: 'energy_wh',
	dcir: 'dcir_mohm',
	internal_resistance: 'dcir_mohm',
	dc_internal_resistance: 'dcir_mohm',
	ocv: 'ocv_v',
	open_circuit_voltage: 'ocv_v',
	cell_spread: 'cell_spread_mv',
	cell_voltage_spread: 'cell_spread_mv',
	insulation: 'insulation_mohm',
	insulation_resistance: 'insulation_mohm',
	ambient: 'ambient_c',
	ambient_temp: 'ambient_c',
	ambient_temperature: 'ambient_c',
	station: 'rig',
	operator_id: 'operator',
	tested_by: 'operator',
	pulse_u1: 'pulse_u1_v',
	pulse_i1: 'pulse_i1_a',
	pulse_u2: 'pulse_u2_v',
	pulse_i2: 'pulse_i2_a'
};

/**
 * Units a bracketed suffix may name for each numeric column, and how to say the expected
 * one. Case matters for the ohm columns: "mOhm" is a milliohm, "MOhm" a megaohm, and
 * mixing them up is a factor of 10⁹. "Ω" is read as "Ohm".
 */
const UNITS: Partial<Record<FactoryColumn, { ok: RegExp; say: string }>> = {
	capacity_ah: { ok: /^(ah|a·h|amp[- ]?hours?)$/i, say: 'Ah' },
	energy_wh: { ok: /^(wh|w·h|watt[- ]?hours?)$/i, say: 'Wh' },
	dcir_mohm: { ok: /^m(illi)?[oO][hH][mM][sS]?$/, say: 'mΩ' },
	ocv_v: { ok: /^(v|volts?)$/i, say: 'V' },
	cell_spread_mv: { ok: /^(mv|millivolts?)$/i, say: 'mV' },
	insulation_mohm: { ok: /^(M[oO][hH][mM][sS]?|[mM]eg(a)?ohms?)$/, say: 'MΩ' },
	// U+FFFD: a degree sign written in Windows-1252 and read as UTF-8.
	ambient_c: { ok: /^([°º\uFFFD]\s?c|c|deg\s?c|celsius)$/i, say: '°C' },
	pulse_u1_v: { ok: /^(v|volts?)$/i, say: 'V' },
	pulse_u2_v: { ok: /^(v|volts?)$/i, say: 'V' },
	pulse_i1_a: { ok: /^(a|amps?|amperes?)$/i, say: 'A' },
	pulse_i2_a: { ok: /^(a|amps?|amperes?)$/i, say: 'A' }
};

/** Longest header cell that is matched to a column; longer ones are ignored columns. */
export const MAX_HEADER_LENGTH = 200;
/** Most columns a factory test file may have (it needs 6 to 16); more means another kind of file. */
export const MAX_COLUMNS = 200;
/** Longest number or date cell that is read; no measurement or ISO 8601 time comes near it. */
export const MAX_VALUE_LENGTH = 100;

/** A cell quoted in a message: long ones cut, so one row cannot make a megabyte of errors. */
export function shorten(text: string, max = 60): string {
	return text.length > max ? `${text.slice(0, max)}… (${text.length} characters)` : text;
}

function tooLong(label: string, s: string): string {
	return `${label} "${shorten(s, 20)}" is ${s.length} characters long; a value has at most ${MAX_VALUE_LENGTH}.`;
}

/**
 * "Capacity (Ah)" → name "Capacity", unit "Ah": a closing bracket or parenthesis at the
 * end, and the first opening one after which no other closing one comes. One pass from the
 * end, so the cost is linear in the length (a backtracking pattern was quadratic).
 */
function splitUnitSuffix(h: string): { name: string; unit: string } | null {
	const last = h.length - 1;
	if (last < 1 || (h[last] !== ')' && h[last] !== ']')) return null;
	let open = -1;
	for (let i = last - 1; i >= 0; i--) {
		const c = h[i];
		if (c === ')' || c === ']') break;
		if (c === '(' || c === '[') open = i;
	}
	if (open < 0) return null;
	return { name: h.slice(0, open).trimEnd(), unit: h.slice(open + 1, last) };
}

export interface HeaderMatch {
	column: FactoryColumn | null;
	/** Unit named in brackets or parentheses after the name, if any. */
	unit: string | null;
}

/**
 * Match a header cell to a column: case, spaces and a unit suffix in brackets or
 * parentheses are ignored ("Capacity (Ah)", "capacity_ah [Ah]" → capacity_ah).
 */
export function matchHeader(header: string): HeaderMatch {
	// No column name is anywhere near this long: a longer cell is not read at all, so no
	// pattern below ever runs on more than a few hundred characters.
	if (header.length > MAX_HEADER_LENGTH) return { column: null, unit: null };
	let h = header.replace(/^\uFEFF/, '').trim();
	let unit: string | null = null;
	const split = splitUnitSuffix(h);
	if (split) {
		h = split.name;
		unit = split.unit.trim().replace(/Ω/g, 'Ohm').replace(/ω/g, 'ohm');
	}
	const key = h
		.toLowerCase()
		.replace(/[\s\-./]+/g, '_')
		.replace(/_+/g, '_')
		.replace(/^_|_$/g, '');
	const column = (COLUMNS as readonly string[]).includes(key)
		? (key as FactoryColumn)
		: (ALIASES[key] ?? null);
	return { column, unit };
}

export interface RowError {
	/** Row as a person sees it in a spreadsheet: the header is row 1, the first data row 2. */
	row: number;
	column: string;
	message: string;
}

export interface ParsedRow {
	row: number;
	/** Cell text by column name; columns the file lacks are absent. */
	raw: Partial<Record<FactoryColumn, string>>;
}

export type ParseResult =
	| { ok: false; error: string }
	| {
			ok: true;
			delimiter: ',' | ';';
			/** True for `;` files, where "45,2" means 45.2. */
			decimalComma: boolean;
			/** Column name → the header text as written in the file. */
			headerMap: Partial<Record<FactoryColumn, string>>;
			/** Header cells that match no column; their values are not read. */
			ignoredColumns: string[];
			/** Data rows that could be split into the header's columns. */
			rows: ParsedRow[];
			/** Rows that could not be split (too many fields, a broken quote); not in `rows`. */
			rowErrors: RowError[];
	  };

const isBlankRecord = (r: string[]) => r.every((c) => c.trim() === '');

/** Why the text is not CSV, or null. Thresholds are common practice, not a standard. */
function binaryReason(text: string): string | null {
	const sample = text.slice(0, 8192);
	if (sample.startsWith('PK\u0003\u0004')) {
		return 'This does not look like a CSV text file: it looks like an Excel workbook or another zip file. In Excel use Save As → "CSV UTF-8".';
	}
	if (sample.includes('\u0000')) {
		return 'This does not look like a CSV text file: it contains NUL bytes. If it was saved as UTF-16 ("Unicode text"), save it again as "CSV UTF-8".';
	}
	let odd = 0;
	for (const ch of sample) {
		const c = ch.codePointAt(0)!;
		if ((c < 32 && c !== 9 && c !== 10 && c !== 13) || c === 127 || c === 0xfffd) odd++;
	}
	if (odd > 0.05 * sample.length) {
		return `This does not look like a CSV text file: ${odd} of the first ${sample.length} characters are not printable text.`;
	}
	return null;
}

/**
 * The delimiter, judged from the header line alone: header names hold neither `,` nor
 * `;`, whereas data rows of a `;` file hold decimal commas. (Papa Parse's own guess
 * compares field counts over the first rows; reading the header is simpler to predict.)
 */
function detectDelimiter(text: string): ',' | ';' {
	// The first non-blank line, found without splitting the whole file into lines.
	let firstLine = '';
	for (let at = 0; at < text.length && firstLine.trim() === '';) {
		let end = at;
		while (end < text.length && text[end] !== '\n' && text[end] !== '\r') end++;
		firstLine = text.slice(at, end);
		at = end + 1;
	}
	let commas = 0;
	let semicolons = 0;
	let quoted = false;
	for (const ch of firstLine) {
		if (ch === '"') quoted = !quoted;
		else if (!quoted && ch === ',') commas++;
		else if (!quoted && ch === ';') semicolons++;
	}
	return semicolons > commas ? ';' : ',';
}

/** The header's columns: which column each cell names, where each sits, or why the file cannot be read. */
function readHeader(header: string[]):
	| { ok: false; error: string }
	| {
			ok: true;
			headerMap: Partial<Record<FactoryColumn, string>>;
			positions: Partial<Record<FactoryColumn, number>>;
			ignoredColumns: string[];
	  } {
	if (header.length > MAX_COLUMNS)
		return {
			ok: false,
			error: `The header row has ${header.length} columns; a factory test file has at most ${MAX_COLUMNS}. Check that this is the rig's results file.`
		};
	const headerMap: Partial<Record<FactoryColumn, string>> = {};
	const positions: Partial<Record<FactoryColumn, number>> = {};
	const ignoredColumns: string[] = [];
	for (const [i, cell] of header.entries()) {
		const { column, unit } = matchHeader(cell);
		if (!column) {
			if (cell !== '') ignoredColumns.push(shorten(cell));
			continue;
		}
		if (headerMap[column] !== undefined) {
			return {
				ok: false,
				error: `The columns "${headerMap[column]}" and "${cell}" both mean ${column}; keep one of them.`
			};
		}
		const expected = UNITS[column];
		if (unit !== null && expected && !expected.ok.test(unit)) {
			return {
				ok: false,
				error: `The column "${cell}" is in ${unit}, but ${column} must be in ${expected.say}. Convert the values to ${expected.say} and rename the column.`
			};
		}
		headerMap[column] = cell;
		positions[column] = i;
	}

	const hasPulse = PULSE_COLUMNS.every((c) => headerMap[c] !== undefined);
	const missing = REQUIRED_COLUMNS.filter(
		(c) => headerMap[c] === undefined && !(c === 'dcir_mohm' && hasPulse)
	);
	if (missing.length > 0) {
		const names = missing.map((c) =>
			c === 'dcir_mohm' ? `dcir_mohm (or all four of ${PULSE_COLUMNS.join(', ')})` : c
		);
		const found = header.filter((h) => h !== '').map((h) => `"${shorten(h)}"`);
		return {
			ok: false,
			error: `Missing required column${missing.length > 1 ? 's' : ''}: ${names.join(', ')}. Columns found: ${found.join(', ') || 'none'}.`
		};
	}

	return { ok: true, headerMap, positions, ignoredColumns };
}

/** Why a record cannot be split into the header's columns, or null. */
function recordProblem(
	record: string[],
	columns: number,
	delimiter: ',' | ';',
	badQuote: boolean
): string | null {
	if (badQuote)
		return 'A quoted value has text after its closing quote; put the whole value in quotes and double any quote inside it ("").';
	// Spreadsheets sometimes write trailing empty cells; only non-empty extras are a problem.
	if (record.length <= columns) return null;
	for (let k = columns; k < record.length; k++) {
		if (record[k].trim() !== '') {
			const hint =
				delimiter === ','
					? ' A decimal comma or an unquoted comma inside a value splits it in two; write numbers with a decimal point.'
					: ' A semicolon inside a value must be quoted.';
			return `This row has ${record.length} values but the header has ${columns} columns.${hint}`;
		}
	}
	return null;
}

/** Split a rig file into header and rows; file-level problems end the import with one message. */
export function parseFactoryCsv(text: string): ParseResult {
	const body = text.replace(/^\uFEFF/, '');
	if (body.trim() === '') return { ok: false, error: 'The file is empty.' };
	const binary = binaryReason(body);
	if (binary) return { ok: false, error: binary };

	const delimiter = detectDelimiter(body);
	const parsed = Papa.parse<string[]>(body, { delimiter, skipEmptyLines: false });
	const unclosed = parsed.errors.find((e) => e.code === 'MissingQuotes');
	if (unclosed) {
		return {
			ok: false,
			error: `Row ${(unclosed.row ?? 0) + 1} has a double quote (") that is never closed, so the rest of the file cannot be read. Remove the stray quote or double it ("").`
		};
	}
	const records = parsed.data;
	const headerIndex = records.findIndex((r) => !isBlankRecord(r));
	if (headerIndex < 0) return { ok: false, error: 'The file is empty.' };
	const header = records[headerIndex].map((h) => h.trim());

	const head = readHeader(header);
	if (!head.ok) return head;
	const { headerMap, positions, ignoredColumns } = head;

	const columnPositions = Object.entries(positions) as [FactoryColumn, number][];
	const badQuotes = new Set(
		parsed.errors.filter((e) => e.code === 'InvalidQuotes').map((e) => e.row)
	);
	const rows: ParsedRow[] = [];
	const rowErrors: RowError[] = [];
	for (let i = headerIndex + 1; i < records.length; i++) {
		const record = records[i];
		if (isBlankRecord(record)) continue;
		const row = i + 1;
		const problem = recordProblem(record, header.length, delimiter, badQuotes.has(i));
		if (problem) {
			rowErrors.push({ row, column: '', message: problem });
			continue;
		}
		const raw: Partial<Record<FactoryColumn, string>> = {};
		for (const [column, pos] of columnPositions) raw[column] = record[pos] ?? '';
		rows.push({ row, raw });
		// Let the parsed record go now: on a 100k-row file this halves the peak memory.
		(records as unknown[])[i] = undefined;
	}
	if (rows.length === 0 && rowErrors.length === 0) {
		return { ok: false, error: 'The file has a header but no data rows.' };
	}
	return {
		ok: true,
		delimiter,
		decimalComma: delimiter === ';',
		headerMap,
		ignoredColumns,
		rows,
		rowErrors
	};
}

/** One validated test record, ready for the register to look its serial up. */
export interface FactoryTestRow {
	serial: string;
	testedAt: Date;
	capacityAh: number;
	energyWh: number | null;
	dcirMohm: number;
	/** Whether DCIR was in the file or computed from the pulse columns (IEC 61960-3 two-step pulse). */
	dcirSource: 'measured' | 'two_pulse';
	ocvV: number | null;
	cellSpreadMv: number;
	insulationMohm: number;
	ambientC: number | null;
	rig: string | null;
	operator: string | null;
	pulse: TwoPulseReading | null;
}

export type RowValidation = { ok: true; value: FactoryTestRow } | { ok: false; errors: RowError[] };

interface NumberRule {
	label: string;
	unit: string;
	min: number;
	/** True when the minimum itself is not allowed (capacity 0 Ah is no measurement). */
	minExclusive: boolean;
	max: number;
}

/**
 * Plausible physical bounds (common practice, not from a standard): wide enough for any
 * module Tidewater builds, narrow enough to catch a wrong unit or a misplaced decimal point.
 */
const RULES: Record<
	Exclude<FactoryColumn, 'serial' | 'tested_at' | 'rig' | 'operator'>,
	NumberRule
> = {
	capacity_ah: { label: 'Capacity', unit: 'Ah', min: 0, minExclusive: true, max: 10_000 },
	energy_wh: { label: 'Energy', unit: 'Wh', min: 0, minExclusive: true, max: 1_000_000 },
	dcir_mohm: {
		label: 'DC internal resistance',
		unit: 'mΩ',
		min: 0,
		minExclusive: true,
		max: 10_000
	},
	ocv_v: { label: 'Open-circuit voltage', unit: 'V', min: 0, minExclusive: true, max: 1500 },
	cell_spread_mv: {
		label: 'Cell voltage spread',
		unit: 'mV',
		min: 0,
		minExclusive: false,
		max: 5000
	},
	insulation_mohm: {
		label: 'Insulation resistance',
		unit: 'MΩ',
		min: 0,
		minExclusive: false,
		max: 1_000_000
	},
	ambient_c: { label: 'Ambient temperature', unit: '°C', min: -40, minExclusive: false, max: 85 },
	pulse_u1_v: { label: 'Pulse voltage U1', unit: 'V', min: 0, minExclusive: true, max: 1500 },
	pulse_i1_a: { label: 'Pulse current I1', unit: 'A', min: 0, minExclusive: false, max: 100_000 },
	pulse_u2_v: { label: 'Pulse voltage U2', unit: 'V', min: 0, minExclusive: true, max: 1500 },
	pulse_i2_a: { label: 'Pulse current I2', unit: 'A', min: 0, minExclusive: true, max: 100_000 }
};

type NumberColumn = keyof typeof RULES;

const POINT_NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;
const COMMA_NUMBER = /^[+-]?(\d+(,\d*)?|,\d+)$/;

/** Read a number cell: null when empty, else the number or a message saying what to fix. */
function readNumber(
	text: string,
	rule: NumberRule,
	decimalComma: boolean
): { value: number | null } | { message: string } {
	const s = text.trim();
	if (s === '') return { value: null };
	if (s.length > MAX_VALUE_LENGTH) return { message: tooLong(rule.label, s) };
	let value: number;
	if (POINT_NUMBER.test(s)) value = Number(s);
	else if (decimalComma && COMMA_NUMBER.test(s)) value = Number(s.replace(',', '.'));
	else if (/^[+-]?\d{1,3}([.,]\d{3})+([.,]\d+)?$/.test(s) && s.includes(',') && s.includes('.')) {
		return {
			message: `${rule.label} "${s}" has a thousands separator; write the number without it, e.g. ${s.replace(/[.,](?=\d{3}(\D|$))/g, '')}.`
		};
	} else if (COMMA_NUMBER.test(s)) {
		return {
			message: `${rule.label} "${s}" has a decimal comma; write ${s.replace(',', '.')} (a decimal comma is only read in files separated by semicolons).`
		};
	} else if (/^[+-]?[\d.,]+\s*[^\d\s.,]+$/.test(s)) {
		return {
			message: `${rule.label} "${s}" has text after the number; write only the number, in ${rule.unit}.`
		};
	} else {
		return {
			message: `${rule.label} "${s}" is not a number; write the value in ${rule.unit} with digits and a decimal point.`
		};
	}
	const low = rule.minExclusive ? value <= rule.min : value < rule.min;
	if (low || value > rule.max) {
		const lower = rule.minExclusive ? `above ${rule.min}` : `at least ${rule.min}`;
		return {
			message: `${rule.label} ${s} ${rule.unit} is out of range: it must be ${lower} and at most ${rule.max} ${rule.unit}. Check the unit and the decimal point.`
		};
	}
	return { value };
}

/** Clock skew allowed between rig and server before a time counts as "in the future" (common practice). */
export const CLOCK_SKEW_MS = 5 * 60 * 1000;
/** Earlier times mean a rig whose clock was reset (often to 1970); common practice. */
const EARLIEST_TEST = Date.UTC(2000, 0, 1);

const ISO_DATE_TIME =
	/^(\d{4})-(\d{2})-(\d{2})(?:[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d+))?)?)?\s*([Zz]|[+-]\d{2}(?::?\d{2})?)?$/;

/**
 * An ISO 8601 date-time with a UTC offset ("2026-03-12T08:15:00Z", "…+01:00"). A time
 * without an offset is refused rather than guessed: the instant decides duplicates and
 * the "not in the future" check, and a rig's local time shifts with daylight saving.
 */
export function parseTestedAt(
	text: string
): { ok: true; date: Date } | { ok: false; message: string } {
	const s = text.trim();
	if (s === '')
		return {
			ok: false,
			message:
				'Tested at is empty; enter the date and time of the test in ISO 8601, e.g. 2026-03-12T08:15:00Z.'
		};
	if (s.length > MAX_VALUE_LENGTH) return { ok: false, message: tooLong('Tested at', s) };
	const local = /^(\d{1,2})[./-](\d{1,2})[./-](\d{4})(.*)$/.exec(s);
	if (local) {
		const [a, b, y] = [Number(local[1]), Number(local[2]), local[3]];
		const iso = (month: number, day: number) =>
			`${y}-${String(month).padStart(2, '0')}-${String(day).padStart(2, '0')}T08:15:00Z`;
		let example: string;
		if (a > 12) example = iso(b, a);
		else if (b > 12) example = iso(a, b);
		else example = `${iso(b, a)} (if ${a} is the day) or ${iso(a, b)} (if ${a} is the month)`;
		return {
			ok: false,
			message: `Tested at "${s}" is not an ISO 8601 date; write the year first, with the time and UTC offset, e.g. ${example}.`
		};
	}
	const m = ISO_DATE_TIME.exec(s);
	if (!m)
		return {
			ok: false,
			message: `Tested at "${s}" is not an ISO 8601 date-time; write it like 2026-03-12T08:15:00Z.`
		};
	const [, ys, mos, ds, hs, mis, ss, frac, offset] = m;
	if (hs === undefined)
		return {
			ok: false,
			message: `Tested at "${s}" has a date but no time; add the time and UTC offset, e.g. ${ys}-${mos}-${ds}T08:15:00Z.`
		};
	if (offset === undefined) {
		return {
			ok: false,
			message: `Tested at "${s}" has no UTC offset, so the instant is ambiguous; add Z for UTC or the rig's offset, e.g. ${s.replace(' ', 'T')}+01:00.`
		};
	}
	const [y, mo, d, h, mi, sec] = [ys, mos, ds, hs, mis, ss ?? '0'].map(Number);
	const daysInMonth = new Date(Date.UTC(y, mo, 0)).getUTCDate();
	let offsetMin = 0;
	if (offset.toUpperCase() !== 'Z') {
		const digits = offset.slice(1).replace(':', '');
		const oh = Number(digits.slice(0, 2));
		const om = Number(digits.slice(2) || '0');
		if (oh > 23 || om > 59)
			return { ok: false, message: `Tested at "${s}" has an impossible UTC offset ${offset}.` };
		offsetMin = (offset[0] === '-' ? -1 : 1) * (oh * 60 + om);
	}
	if (mo < 1 || mo > 12 || d < 1 || d > daysInMonth || h > 23 || mi > 59 || sec > 59) {
		return {
			ok: false,
			message: `Tested at "${s}" is not a real date and time; check the month, day and hour.`
		};
	}
	const ms = frac ? Math.round(Number(`0.${frac}`) * 1000) : 0;
	return { ok: true, date: new Date(Date.UTC(y, mo - 1, d, h, mi, sec, ms) - offsetMin * 60_000) };
}

/**
 * Check one row's values (raw cell text by column name). `rowNumber` is passed through
 * to the errors. DCIR comes from dcir_mohm, or when that is empty from the four pulse
 * columns by the IEC 61960-3 two-step pulse (see `dcirTwoPulse`).
 */
export function validateRowValues(
	raw: Partial<Record<string, string>>,
	rowNumber: number,
	now: Date,
	options: { decimalComma?: boolean } = {}
): RowValidation {
	const errors: RowError[] = [];
	const fail = (column: string, message: string) =>
		errors.push({ row: rowNumber, column, message });
	const cell = (c: FactoryColumn) => (raw[c] ?? '').trim();
	const num = (c: NumberColumn, required: boolean): number | null => {
		const r = readNumber(cell(c), RULES[c], options.decimalComma ?? false);
		if ('message' in r) {
			fail(c, r.message);
			return null;
		}
		if (r.value === null && required)
			fail(c, `${RULES[c].label} is empty; enter the measured value in ${RULES[c].unit}.`);
		return r.value;
	};

	const serial = cell('serial');
	if (serial === '')
		fail('serial', 'Serial is empty; every row needs the serial number of the module tested.');
	// eslint-disable-next-line no-control-regex -- control characters are what is looked for
	else if (/[\u0000-\u001f\u007f]/.test(serial))
		fail('serial', `Serial "${shorten(serial)}" contains control characters; retype it.`);

	let testedAt: Date | null = null;
	const t = parseTestedAt(cell('tested_at'));
	if (!t.ok) fail('tested_at', t.message);
	else if (t.date.getTime() > now.getTime() + CLOCK_SKEW_MS) {
		fail(
			'tested_at',
			`Tested at ${t.date.toISOString()} is in the future (the import ran at ${now.toISOString()}); check the rig's clock and time zone.`
		);
	} else if (t.date.getTime() < EARLIEST_TEST) {
		fail(
			'tested_at',
			`Tested at ${t.date.toISOString()} is before the year 2000; the rig's clock was probably reset. Correct the date.`
		);
	} else testedAt = t.date;

	const capacityAh = num('capacity_ah', true);
	const energyWh = num('energy_wh', false);
	const ocvV = num('ocv_v', false);
	const cellSpreadMv = num('cell_spread_mv', true);
	const insulationMohm = num('insulation_mohm', true);
	const ambientC = num('ambient_c', false);

	let dcirMohm: number | null = null;
	let dcirSource: FactoryTestRow['dcirSource'] = 'measured';
	let pulse: TwoPulseReading | null = null;
	const anyPulse = PULSE_COLUMNS.some((c) => cell(c) !== '');
	if (cell('dcir_mohm') !== '') {
		dcirMohm = num('dcir_mohm', true);
	} else if (anyPulse) {
		const [u1V, i1A, u2V, i2A] = PULSE_COLUMNS.map((c) => num(c, true));
		if (u1V !== null && i1A !== null && u2V !== null && i2A !== null) {
			pulse = { u1V, i1A, u2V, i2A };
			try {
				const r = dcirTwoPulse(pulse);
				const checked = readNumber(String(r), RULES.dcir_mohm, false);
				if ('message' in checked)
					fail('dcir_mohm', `Computed from the pulse columns: ${checked.message}`);
				else {
					dcirMohm = r;
					dcirSource = 'two_pulse';
				}
			} catch (e) {
				if (!(e instanceof RangeError)) throw e;
				fail(
					'dcir_mohm',
					`DC internal resistance cannot be computed from the pulse columns: ${e.message}.`
				);
			}
		}
	} else {
		fail(
			'dcir_mohm',
			`DC internal resistance is empty; enter it in mΩ, or fill the four pulse columns (${PULSE_COLUMNS.join(', ')}).`
		);
	}

	const rig = cell('rig') || null;
	const operator = cell('operator') || null;
	if (
		errors.length > 0 ||
		testedAt === null ||
		capacityAh === null ||
		dcirMohm === null ||
		cellSpreadMv === null ||
		insulationMohm === null
	) {
		return { ok: false, errors };
	}
	return {
		ok: true,
		value: {
			serial,
			testedAt,
			capacityAh,
			energyWh,
			dcirMohm,
			dcirSource,
			ocvV,
			cellSpreadMv,
			insulationMohm,
			ambientC,
			rig,
			operator,
			pulse
		}
	};
}

/**
 * Key of a test for spotting duplicates, within a file and against the register: the
 * same module, at the same instant, on the same rig. JSON keeps the parts apart even when
 * a rig name holds a separator character.
 */
export function rowKey(row: Pick<FactoryTestRow, 'serial' | 'testedAt' | 'rig'>): string {
	// Unit separator (U+001F) between the parts: control characters never survive
	// validation in a serial, so the parts stay apart; cheaper than JSON for 100k rows.
	return `${row.serial}\u001f${row.testedAt.getTime()}\u001f${row.rig ?? ''}`;
}

export type FileValidation =
	| { ok: false; error: string }
	| {
			ok: true;
			headerMap: Partial<Record<FactoryColumn, string>>;
			ignoredColumns: string[];
			rows: { row: number; value: FactoryTestRow }[];
			/** Sorted by row; `column` is the header as written in the file. */
			errors: RowError[];
	  };

/** A checked row as `scanFactoryCsv` hands it over: the instant in epoch milliseconds. */
export interface ScannedRow extends Omit<FactoryTestRow, 'testedAt'> {
	testedAtMs: number;
	/** The serial in capitals, as the register stores it. */
	serialKey: string;
	/** `rowKey` of the row, with the serial in capitals. */
	key: string;
}

export type FileScan =
	| { ok: false; error: string }
	| {
			ok: true;
			headerMap: Partial<Record<FactoryColumn, string>>;
			ignoredColumns: string[];
			/** Data rows that are not blank, accepted or not. */
			rowsTotal: number;
			/** Sorted by row; `column` is the header as written in the file. */
			errors: RowError[];
	  };

/**
 * The tests a file has shown so far, to find one repeated (the same `rowKey`: serial in
 * capitals, instant, rig): one map entry per serial, and each test's instant, rig and row in
 * typed arrays, chained to the serial's earlier tests. It lives through the whole file, so it
 * is kept small: ~80 bytes a row against ~130 for a map of one key string per row (measured
 * in a heap snapshot of a 100,000-row preview), and V8 lets the heap grow to a multiple of
 * what is live before a full collection.
 */
class SeenTests {
	#latest = new Map<string, number>();
	#rigs = new Map<string, number>();
	#ms = new Float64Array(1024);
	#rig = new Int32Array(1024);
	#row = new Int32Array(1024);
	#prev = new Int32Array(1024);
	#n = 0;

	/** The row of an earlier test of the same serial, instant and rig; else remembers this one. */
	check(serial: string, ms: number, rig: string | null, row: number): number | undefined {
		let rigId = this.#rigs.get(rig ?? '');
		if (rigId === undefined) this.#rigs.set(rig ?? '', (rigId = this.#rigs.size));
		const head = this.#latest.get(serial) ?? -1;
		for (let i = head; i >= 0; i = this.#prev[i])
			if (this.#ms[i] === ms && this.#rig[i] === rigId) return this.#row[i];
		const at = this.#n++;
		if (at === this.#ms.length) this.#grow();
		this.#ms[at] = ms;
		this.#rig[at] = rigId;
		this.#row[at] = row;
		this.#prev[at] = head;
		this.#latest.set(serial, at);
		return undefined;
	}

	#grow() {
		const size = this.#ms.length * 2;
		this.#ms = grown(this.#ms, new Float64Array(size));
		this.#rig = grown(this.#rig, new Int32Array(size));
		this.#row = grown(this.#row, new Int32Array(size));
		this.#prev = grown(this.#prev, new Int32Array(size));
	}
}

/** `to` with `from` copied into its start. */
function grown<T extends Float64Array | Int32Array>(from: T, to: T): T {
	to.set(from);
	return to;
}

/** About this many characters are split and checked at a time. */
const SLICE_CHARS = 64 * 1024;

/** The file's line break, from its first one (Papa Parse is told it, so every slice agrees). */
function lineBreak(text: string): '\r\n' | '\n' | '\r' {
	for (let i = 0; i < text.length && i < 1 << 20; i++) {
		const c = text.charCodeAt(i);
		if (c === 10) return '\n';
		if (c === 13) return text.charCodeAt(i + 1) === 10 ? '\r\n' : '\r';
	}
	return '\r\n';
}

/**
 * Where the slice starting at `from` ends: just after the first line break at or past
 * `from + size` that is outside a quoted value (RFC 4180: a quote opens a value only at
 * its start; `""` inside is a quote; a quote followed by a delimiter or line break closes).
 */
function sliceEnd(text: string, from: number, size: number, delimiter: string, nl: string): number {
	const d = delimiter.charCodeAt(0);
	const last = nl.charCodeAt(nl.length - 1);
	const crlf = nl.length === 2;
	let quoted = false;
	let fieldStart = true;
	for (let i = from; i < text.length; i++) {
		const c = text.charCodeAt(i);
		if (quoted) {
			if (c !== 34) continue;
			const n = text.charCodeAt(i + 1);
			if (n === 34) i++;
			else if (n === d || n === 13 || n === 10 || Number.isNaN(n)) quoted = false;
			continue;
		}
		if (c === 34 && fieldStart) {
			quoted = true;
			fieldStart = false;
		} else if (c === d) fieldStart = true;
		else if (c === last && (!crlf || text.charCodeAt(i - 1) === 13)) {
			fieldStart = true;
			if (i >= from + size) return i + 1;
		} else fieldStart = crlf && c === 13;
	}
	return text.length;
}

type Positions = Record<FactoryColumn, number>;

const isDigit = (c: number) => c >= 48 && c <= 57;
const DAYS = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

/**
 * The common form "2026-11-01T06:00:00Z" (optional fraction) as epoch ms, or NaN for
 * anything else, which `parseTestedAt` then reads with its explanations. Reads the
 * characters directly: no regular expression, no Date object.
 */
function quickInstant(s: string): number {
	if (s.length < 20 || s.length > 40 || s.charCodeAt(s.length - 1) !== 90) return NaN;
	const at = (i: number, n: number) => {
		let v = 0;
		for (let k = i; k < i + n; k++) {
			const c = s.charCodeAt(k);
			if (!isDigit(c)) return NaN;
			v = v * 10 + c - 48;
		}
		return v;
	};
	if (s[4] !== '-' || s[7] !== '-' || s[10] !== 'T' || s[13] !== ':' || s[16] !== ':') return NaN;
	const y = at(0, 4);
	const mo = at(5, 2);
	const d = at(8, 2);
	const h = at(11, 2);
	const mi = at(14, 2);
	const sec = at(17, 2);
	let ms = 0;
	if (s.length > 20) {
		if (s[19] !== '.' && s[19] !== ',') return NaN;
		const digits = s.length - 21;
		if (digits < 1 || digits > 3) return NaN;
		ms = at(20, digits) * 10 ** (3 - digits);
	}
	if (!(y >= 2000) || !(mo >= 1 && mo <= 12) || !(h <= 23) || !(mi <= 59) || !(sec <= 59))
		return NaN;
	const leap = mo === 2 && y % 4 === 0 && (y % 100 !== 0 || y % 400 === 0) ? 1 : 0;
	if (!(d >= 1 && d <= DAYS[mo - 1] + leap)) return NaN;
	return Date.UTC(y, mo - 1, d, h, mi, sec, ms);
}

/** A plain number in range, null when empty, undefined when `readNumber` must explain. */
function quickNumber(s: string, rule: NumberRule): number | null | undefined {
	if (s === '') return null;
	if (!POINT_NUMBER.test(s)) return undefined;
	const v = Number(s);
	if ((rule.minExclusive ? v <= rule.min : v < rule.min) || v > rule.max) return undefined;
	return v;
}

/**
 * The usual row, checked without building a row object: true with `out` filled when every
 * value is plainly valid, false when anything needs `validateRowValues` and its messages.
 * It accepts only rows `validateRowValues` accepts, with the same values.
 */
function quickRow(rec: string[], at: Positions, nowMs: number, out: ScannedRow): boolean {
	const cell = (c: FactoryColumn) => (at[c] < 0 ? '' : (rec[at[c]] ?? '').trim());
	const serial = cell('serial');
	if (serial === '') return false;
	for (let i = 0; i < serial.length; i++) {
		const c = serial.charCodeAt(i);
		if (c < 32 || c === 127) return false;
	}
	const t = quickInstant(cell('tested_at'));
	if (!(t <= nowMs + CLOCK_SKEW_MS)) return false;
	const capacityAh = quickNumber(cell('capacity_ah'), RULES.capacity_ah);
	const energyWh = quickNumber(cell('energy_wh'), RULES.energy_wh);
	const ocvV = quickNumber(cell('ocv_v'), RULES.ocv_v);
	const cellSpreadMv = quickNumber(cell('cell_spread_mv'), RULES.cell_spread_mv);
	const insulationMohm = quickNumber(cell('insulation_mohm'), RULES.insulation_mohm);
	const ambientC = quickNumber(cell('ambient_c'), RULES.ambient_c);
	const dcirMohm = quickNumber(cell('dcir_mohm'), RULES.dcir_mohm);
	if (
		capacityAh == null ||
		cellSpreadMv == null ||
		insulationMohm == null ||
		dcirMohm == null ||
		energyWh === undefined ||
		ocvV === undefined ||
		ambientC === undefined
	)
		return false;
	out.serial = serial;
	out.testedAtMs = t;
	out.capacityAh = capacityAh;
	out.energyWh = energyWh;
	out.dcirMohm = dcirMohm;
	out.dcirSource = 'measured';
	out.ocvV = ocvV;
	out.cellSpreadMv = cellSpreadMv;
	out.insulationMohm = insulationMohm;
	out.ambientC = ambientC;
	out.rig = cell('rig') || null;
	out.operator = cell('operator') || null;
	out.pulse = null;
	return true;
}

/**
 * Reads and checks a whole rig file in one pass, slice by slice: each slice (about 64 KB,
 * ending at a line break outside quotes) is split by Papa Parse a record at a time and each
 * row checked as it comes, so no slice's records, let alone the file's, are held together. Each valid
 * row that does not repeat an earlier row's key goes to `accept` in one object reused for
 * every row (copy what you keep). The generator yields after each slice, so a server can
 * let other requests run; `validateFactoryCsv` runs it to the end at once.
 */
export function* scanFactoryCsv(
	text: string,
	now: Date,
	accept: (row: number, value: ScannedRow) => void
): Generator<void, FileScan, void> {
	const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
	if (body.trim() === '') return { ok: false, error: 'The file is empty.' };
	const binary = binaryReason(body);
	if (binary) return { ok: false, error: binary };
	const delimiter = detectDelimiter(body);
	const newline = lineBreak(body);
	const decimalComma = delimiter === ';';
	const nowMs = now.getTime();

	const errors: RowError[] = [];
	const seen = new SeenTests();
	const out = {} as ScannedRow;
	let head: Extract<ReturnType<typeof readHeader>, { ok: true }> | null = null;
	let columns = 0;
	const at = Object.fromEntries(COLUMNS.map((c) => [c, -1])) as Positions;
	const shown = (column: string) => head?.headerMap[column as FactoryColumn] ?? column;
	let rowsTotal = 0;
	let base = 0;

	/** One record of the file (`i` its index in the slice): the header, or a data row checked at once. */
	const take = (record: string[], i: number, badQuotes: boolean): FileScan | null => {
		if (isBlankRecord(record)) return null;
		const row = base + i + 1;
		if (!head) {
			const header = record.map((h) => h.trim());
			const h = readHeader(header);
			if (!h.ok) return h;
			head = h;
			columns = header.length;
			for (const [c, p] of Object.entries(h.positions)) at[c as FactoryColumn] = p;
			return null;
		}
		rowsTotal++;
		const problem = recordProblem(record, columns, delimiter, badQuotes);
		if (problem) {
			errors.push({ row, column: '', message: problem });
			return null;
		}
		if (!quickRow(record, at, nowMs, out)) {
			const raw: Partial<Record<FactoryColumn, string>> = {};
			for (const c of COLUMNS) if (at[c] >= 0) raw[c] = record[at[c]] ?? '';
			const v = validateRowValues(raw, row, now, { decimalComma });
			if (!v.ok) {
				for (const e of v.errors) errors.push({ ...e, column: shown(e.column) });
				return null;
			}
			const { testedAt, ...rest } = v.value;
			Object.assign(out, rest, { testedAtMs: testedAt.getTime() });
		}
		out.serialKey = out.serial.toUpperCase();
		const first = seen.check(out.serialKey, out.testedAtMs, out.rig, row);
		if (first !== undefined) {
			errors.push({
				row,
				column: shown('serial'),
				message: `Same serial, test time and rig as row ${first}; remove the duplicate row.`
			});
			return null;
		}
		out.key = `${out.serialKey}\u001f${out.testedAtMs}\u001f${out.rig ?? ''}`;
		accept(row, out);
		return null;
	};

	for (let start = 0; start < body.length;) {
		let end = sliceEnd(body, start, SLICE_CHARS, delimiter, newline);
		// Papa Parse hands the slice's records over one at a time (`step`), so none are kept:
		// an array of a whole slice's records outlives young-generation collections and is
		// promoted, which grew the heap by ~40 MB per 100,000 rows (measured, --trace-gc-nvp).
		// Each record is taken when the next one arrives: Papa Parse reads an empty record after
		// a slice's final line break, which is not a line of the file. A quote never closed
		// (its record runs to the slice's end) means the slice was cut inside a value: the rest
		// of the file is then read from that record on, as one.
		let held: { record: string[]; bad: boolean } | null = null;
		let i = 0;
		let from = start;
		let after = start;
		let unclosed = -1;
		let refused: FileScan | null = null;
		const run = () =>
			Papa.parse<string[]>(body.slice(from, end), {
				delimiter,
				newline,
				skipEmptyLines: false,
				step: (results, parser) => {
					if (results.errors.some((e) => e.code === 'MissingQuotes')) {
						unclosed = i;
						parser.abort();
						return;
					}
					if (held) refused = take(held.record, i - 1, held.bad);
					if (refused) {
						parser.abort();
						return;
					}
					held = {
						record: results.data,
						bad: results.errors.some((e) => e.code === 'InvalidQuotes')
					};
					after = from + results.meta.cursor;
					i++;
				}
			});
		run();
		if (unclosed >= 0 && end < body.length && !refused) {
			end = body.length;
			from = after;
			unclosed = -1;
			run();
		}
		if (refused) return refused;
		if (unclosed >= 0) {
			return {
				ok: false,
				error: `Row ${base + unclosed + 1} has a double quote (") that is never closed, so the rest of the file cannot be read. Remove the stray quote or double it ("").`
			};
		}
		let count = i;
		const last = held as { record: string[]; bad: boolean } | null;
		if (last) {
			if (body.endsWith(newline, end) && last.record.length === 1 && last.record[0] === '') count--;
			else if ((refused = take(last.record, i - 1, last.bad))) return refused;
		}
		base += count;
		start = end;
		yield;
	}
	// Set by `take` (TypeScript does not follow assignments made inside a closure).
	const found = head as Extract<ReturnType<typeof readHeader>, { ok: true }> | null;
	if (!found) return { ok: false, error: 'The file is empty.' };
	if (rowsTotal === 0) return { ok: false, error: 'The file has a header but no data rows.' };
	errors.sort((a, b) => a.row - b.row);
	return {
		ok: true,
		headerMap: found.headerMap,
		ignoredColumns: found.ignoredColumns,
		rowsTotal,
		errors
	};
}

/**
 * Parse and check a whole file at once (`scanFactoryCsv` run to its end). A row repeating
 * an earlier row's key (`rowKey`, serial compared in capitals) is an error on the later row.
 */
export function validateFactoryCsv(text: string, now: Date): FileValidation {
	const rows: { row: number; value: FactoryTestRow }[] = [];
	const scan = scanFactoryCsv(text, now, (row, v) => {
		const { testedAtMs, serialKey: _s, key: _k, ...rest } = v;
		rows.push({ row, value: { ...rest, testedAt: new Date(testedAtMs) } });
	});
	let step = scan.next();
	while (!step.done) step = scan.next();
	const file = step.value;
	if (!file.ok) return file;
	return {
		ok: true,
		headerMap: file.headerMap,
		ignoredColumns: file.ignoredColumns,
		rows,
		errors: file.errors
	};
}

/**
 * Make a cell safe to open in a spreadsheet: a leading `=`, `+`, `-` or `@` (and tab or
 * carriage return) would start a formula, so the cell gets a leading single quote
 * (OWASP "CSV Injection" guidance, from memory).
 */
export function neutraliseCell(value: string): string {
	return /^[=+\-@\t\r]/.test(value) ? `'${value}` : value;
}

/**
 * The row errors as a CSV a person can open beside the rig file: row, column, message;
 * RFC 4180 quoting and CRLF by Papa Parse. A UTF-8 BOM is added by default because Excel
 * reads a file without one in the local code page and mangles "mΩ" and "°C" (common practice).
 */
export function toErrorReportCsv(errors: RowError[], options: { bom?: boolean } = {}): string {
	const csv = Papa.unparse(
		{
			fields: ['row', 'column', 'message'],
			data: errors.map((e) => [e.row, neutraliseCell(e.column), neutraliseCell(e.message)])
		},
		{ newline: '\r\n' }
	);
	// Papa Parse ends the text with a line break only when there are no data rows.
	return ((options.bom ?? true) ? '\uFEFF' : '') + csv.replace(/\r\n$/, '') + '\r\n';
}
