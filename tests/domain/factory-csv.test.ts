import { describe, expect, it } from 'vitest';
import Papa from 'papaparse';
import {
	matchHeader,
	neutraliseCell,
	parseFactoryCsv,
	parseTestedAt,
	rowKey,
	toErrorReportCsv,
	validateFactoryCsv,
	validateRowValues
} from '../../src/lib/domain/factory-csv';

const NOW = new Date('2026-03-12T12:00:00Z');
const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
const ROW = 'TW48-0001,2026-03-12T08:15:00Z,46.2,2365.4,2.1,53.1,12,550,21.5,RIG-2,jm';

/** Lines joined by CRLF, the RFC 4180 record separator. */
const csv = (...lines: string[]) => lines.join('\r\n');

function parsedOk(text: string) {
	const p = parseFactoryCsv(text);
	if (!p.ok) throw new Error(`expected ok, got: ${p.error}`);
	return p;
}
function parseError(text: string): string {
	const p = parseFactoryCsv(text);
	if (p.ok) throw new Error('expected a file-level error');
	return p.error;
}

/** A valid raw row (by column name) with some cells replaced. */
const raw = (over: Record<string, string> = {}) => ({
	serial: 'TW48-0001',
	tested_at: '2026-03-12T08:15:00Z',
	capacity_ah: '46.2',
	energy_wh: '2365.4',
	dcir_mohm: '2.1',
	ocv_v: '53.1',
	cell_spread_mv: '12',
	insulation_mohm: '550',
	ambient_c: '21.5',
	rig: 'RIG-2',
	operator: 'jm',
	...over
});
function rowErrors(over: Record<string, string>, opts: { decimalComma?: boolean } = {}) {
	const v = validateRowValues(raw(over), 7, NOW, opts);
	if (v.ok) throw new Error('expected row errors');
	return v.errors;
}

describe('parseFactoryCsv — RFC 4180 records', () => {
	it('RFC 4180 §2 example: "aaa","b""bb","ccc" gives the field b"bb', () => {
		const p = parsedOk(
			csv(HEADER, 'TW48-0001,2026-03-12T08:15:00Z,46.2,,2.1,,12,550,,"b""bb","ccc"')
		);
		expect(p.rows[0].raw.rig).toBe('b"bb');
		expect(p.rows[0].raw.operator).toBe('ccc');
	});

	it('RFC 4180 §2 example: a quoted field may hold CRLF; the next record is still the next spreadsheet row', () => {
		const p = parsedOk(
			csv(HEADER, 'TW48-0001,2026-03-12T08:15:00Z,46.2,,2.1,,12,550,,RIG-2,"b\r\nbb"', ROW)
		);
		expect(p.rows.map((r) => r.row)).toEqual([2, 3]);
		expect(p.rows[0].raw.operator).toBe('b\r\nbb');
	});

	it('reads LF line ends and a last record without a line break (RFC 4180 allows both ends)', () => {
		expect(parsedOk([HEADER, ROW].join('\n')).rows).toHaveLength(1);
		expect(parsedOk(csv(HEADER, ROW, '')).rows).toHaveLength(1);
	});

	it('accepts a UTF-8 byte order mark before the header', () => {
		const p = parsedOk('\uFEFF' + csv(HEADER, ROW));
		expect(p.headerMap.serial).toBe('serial');
		expect(p.rows[0].raw.serial).toBe('TW48-0001');
	});

	it('reads `;` files with decimal commas, as European rigs write them', () => {
		const p = parsedOk(
			csv(
				HEADER.replaceAll(',', ';'),
				'TW48-0001;2026-03-12T08:15:00Z;45,2;;2,1;;12;550;-3,5;RIG-2;jm'
			)
		);
		expect(p.delimiter).toBe(';');
		expect(p.decimalComma).toBe(true);
		const v = validateRowValues(p.rows[0].raw, p.rows[0].row, NOW, {
			decimalComma: p.decimalComma
		});
		expect(v.ok && [v.value.capacityAh, v.value.dcirMohm, v.value.ambientC]).toEqual([
			45.2, 2.1, -3.5
		]);
	});

	it('counts blank lines as spreadsheet rows but returns no row for them', () => {
		const p = parsedOk(csv(HEADER, ROW, '', ROW.replace('0001', '0002')));
		expect(p.rows.map((r) => r.row)).toEqual([2, 4]);
	});

	it('tolerates trailing empty cells but reports a row split by an unquoted comma', () => {
		const p = parsedOk(
			csv(HEADER, ROW + ',,', 'TW48-0002,2026-03-12T08:15:00Z,46,2,,2.1,,12,550,,RIG-2,jm')
		);
		expect(p.rows.map((r) => r.row)).toEqual([2]);
		expect(p.rowErrors).toHaveLength(1);
		expect(p.rowErrors[0].row).toBe(3);
		expect(p.rowErrors[0].message).toMatch(
			/12 values but the header has 11 columns.*decimal comma/
		);
	});
});

describe('header matching', () => {
	it.each([
		['Capacity (Ah)', 'capacity_ah'],
		['capacity_ah [Ah]', 'capacity_ah'],
		['Tested At', 'tested_at'],
		['DCIR [mOhm]', 'dcir_mohm'],
		['DCIR (mΩ)', 'dcir_mohm'],
		['Insulation [MΩ]', 'insulation_mohm'],
		['Cell Spread (mV)', 'cell_spread_mv'],
		['Ambient (°C)', 'ambient_c'],
		['Serial Number', 'serial'],
		['  SERIAL  ', 'serial'],
		['Pulse U1 (V)', 'pulse_u1_v'],
		['Comment', null]
	])('%s → %s', (header, column) => {
		expect(matchHeader(header).column).toBe(column);
	});

	it('maps a spreadsheet header row and lists the columns it ignores', () => {
		const p = parsedOk(
			csv(
				'Serial Number,Tested At,Capacity (Ah),DCIR [mOhm],Cell Spread (mV),Insulation [MOhm],Comment',
				'TW48-0001,2026-03-12T08:15:00Z,46.2,2.1,12,550,ok'
			)
		);
		expect(p.headerMap).toEqual({
			serial: 'Serial Number',
			tested_at: 'Tested At',
			capacity_ah: 'Capacity (Ah)',
			dcir_mohm: 'DCIR [mOhm]',
			cell_spread_mv: 'Cell Spread (mV)',
			insulation_mohm: 'Insulation [MOhm]'
		});
		expect(p.ignoredColumns).toEqual(['Comment']);
	});

	it('refuses a unit suffix that contradicts the column: ohm for DCIR, milliohm for insulation', () => {
		expect(parseError(csv(HEADER.replace('dcir_mohm', 'DCIR (Ohm)'), ROW))).toMatch(
			/"DCIR \(Ohm\)" is in Ohm, but dcir_mohm must be in mΩ/
		);
		expect(parseError(csv(HEADER.replace('insulation_mohm', 'Insulation [mOhm]'), ROW))).toMatch(
			/insulation_mohm must be in MΩ/
		);
	});

	it('refuses two columns that mean the same thing', () => {
		expect(parseError(csv(HEADER + ',DCIR [mOhm]', ROW + ',2.2'))).toBe(
			'The columns "dcir_mohm" and "DCIR [mOhm]" both mean dcir_mohm; keep one of them.'
		);
	});
});

describe('parseFactoryCsv — file-level errors', () => {
	it('empty file, whitespace only, or a BOM only', () => {
		for (const t of ['', '  \r\n\r\n', '\uFEFF']) expect(parseError(t)).toBe('The file is empty.');
	});

	it('header only', () => {
		expect(parseError(HEADER)).toBe('The file has a header but no data rows.');
		expect(parseError(csv(HEADER, '', ',,,'))).toBe('The file has a header but no data rows.');
	});

	it('binary: NUL bytes (e.g. UTF-16), a zip/xlsx signature, or mostly unprintable characters', () => {
		expect(parseError('s\u0000e\u0000r\u0000i\u0000a\u0000l\u0000')).toMatch(
			/^This does not look like a CSV text file.*UTF-16/
		);
		expect(parseError('PK\u0003\u0004\u0014\u0000\u0006\u0000')).toMatch(
			/^This does not look like a CSV text file.*Excel workbook/
		);
		const garbage = Array.from(
			{ length: 400 },
			(_, i) => String.fromCharCode((i * 37) % 32 === 9 ? 1 : (i * 37) % 32) + '\uFFFD'
		).join('');
		expect(parseError(garbage)).toMatch(/^This does not look like a CSV text file/);
	});

	it('a stray degree sign in the wrong encoding (one U+FFFD) is not "binary"', () => {
		expect(parsedOk(csv(HEADER.replace('ambient_c', 'Ambient (\uFFFDC)'), ROW)).rows).toHaveLength(
			1
		);
	});

	it('missing required columns are named, and the columns found are listed', () => {
		const e = parseError(csv('Serial,Capacity (Ah),dcir_mohm,notes', 'TW48-0001,46.2,2.1,x'));
		expect(e).toBe(
			'Missing required columns: tested_at, cell_spread_mv, insulation_mohm. Columns found: "Serial", "Capacity (Ah)", "dcir_mohm", "notes".'
		);
	});

	it('dcir_mohm may be replaced by all four pulse columns, not by some of them', () => {
		const base = 'serial,tested_at,capacity_ah,cell_spread_mv,insulation_mohm';
		expect(
			parsedOk(
				csv(
					`${base},pulse_u1_v,pulse_i1_a,pulse_u2_v,pulse_i2_a`,
					'TW48-0001,2026-03-12T08:15:00Z,280,12,550,3.3,56,3.244,280'
				)
			).ok
		).toBe(true);
		expect(
			parseError(
				csv(`${base},pulse_u1_v,pulse_i1_a`, 'TW48-0001,2026-03-12T08:15:00Z,280,12,550,3.3,56')
			)
		).toMatch(
			/Missing required column: dcir_mohm \(or all four of pulse_u1_v, pulse_i1_a, pulse_u2_v, pulse_i2_a\)/
		);
	});

	it('a quote that is never closed ends the import with its row', () => {
		expect(parseError(csv(HEADER, ROW, 'TW48-0002,"2026-03-12T08:15:00Z,46.2'))).toMatch(
			/^Row 3 has a double quote \("\) that is never closed/
		);
	});
});

describe('validateRowValues — a valid row', () => {
	it('converts the values and keeps optional ones null when empty', () => {
		const v = validateRowValues(
			raw({ energy_wh: '', ocv_v: '', ambient_c: '', operator: '' }),
			2,
			NOW
		);
		expect(v).toEqual({
			ok: true,
			value: {
				serial: 'TW48-0001',
				testedAt: new Date('2026-03-12T08:15:00Z'),
				capacityAh: 46.2,
				energyWh: null,
				dcirMohm: 2.1,
				dcirSource: 'measured',
				ocvV: null,
				cellSpreadMv: 12,
				insulationMohm: 550,
				ambientC: null,
				rig: 'RIG-2',
				operator: null,
				pulse: null
			}
		});
	});

	it('computes DCIR from the pulse columns when dcir_mohm is empty (docs/references.md §3: 0.250 mΩ)', () => {
		const v = validateRowValues(
			raw({
				dcir_mohm: '',
				pulse_u1_v: '3.300',
				pulse_i1_a: '56',
				pulse_u2_v: '3.244',
				pulse_i2_a: '280'
			}),
			2,
			NOW
		);
		expect(v.ok && [v.value.dcirMohm, v.value.dcirSource]).toEqual([0.25, 'two_pulse']);
	});

	it('zero cell spread and zero insulation are possible readings; ambient −40 and 85 °C are the bounds', () => {
		expect(
			validateRowValues(
				raw({ cell_spread_mv: '0', insulation_mohm: '0', ambient_c: '-40' }),
				2,
				NOW
			).ok
		).toBe(true);
		expect(validateRowValues(raw({ ambient_c: '85' }), 2, NOW).ok).toBe(true);
	});

	it('allows 5 minutes of clock skew between rig and server', () => {
		expect(validateRowValues(raw({ tested_at: '2026-03-12T12:04:59Z' }), 2, NOW).ok).toBe(true);
		expect(validateRowValues(raw({ tested_at: '2026-03-12T13:04:00+01:00' }), 2, NOW).ok).toBe(
			true
		);
	});
});

describe('validateRowValues — each row error says what to fix', () => {
	it('reports the row number given and the column', () => {
		expect(rowErrors({ serial: '' })).toEqual([
			{
				row: 7,
				column: 'serial',
				message: 'Serial is empty; every row needs the serial number of the module tested.'
			}
		]);
	});

	it('a day-first date is refused with the ISO 8601 spelling to use', () => {
		const [e] = rowErrors({ tested_at: '12/03/2026' });
		expect(e.column).toBe('tested_at');
		expect(e.message).toContain('2026-03-12T');
		expect(e.message).toMatch(/not an ISO 8601 date; write the year first/);
		// Unambiguous when the first number cannot be a month.
		expect(rowErrors({ tested_at: '25.03.2026 08:15' })[0].message).toContain(
			'e.g. 2026-03-25T08:15:00Z.'
		);
	});

	it.each([
		['', /is empty; enter the date and time/],
		['2026-03-12', /has a date but no time; .*2026-03-12T08:15:00Z/],
		['2026-03-12T08:15:00', /has no UTC offset.*2026-03-12T08:15:00\+01:00/],
		['2026-02-30T08:15:00Z', /not a real date and time/],
		['2026-03-12T24:00:00Z', /not a real date and time/],
		['yesterday', /not an ISO 8601 date-time/],
		['2026-03-12T12:05:01Z', /is in the future .*check the rig's clock/],
		['1970-01-01T00:00:00Z', /before the year 2000; the rig's clock was probably reset/]
	])('tested_at %j', (value, message) => {
		const errs = rowErrors({ tested_at: value });
		expect(errs).toHaveLength(1);
		expect(errs[0].column).toBe('tested_at');
		expect(errs[0].message).toMatch(message);
	});

	it.each([
		['capacity_ah', '', /Capacity is empty; enter the measured value in Ah/],
		['capacity_ah', '0', /Capacity 0 Ah is out of range: it must be above 0 and at most 10000 Ah/],
		['capacity_ah', '10000.1', /out of range/],
		['capacity_ah', 'abc', /Capacity "abc" is not a number/],
		['capacity_ah', '45,2', /has a decimal comma; write 45\.2/],
		['capacity_ah', '45.2 Ah', /has text after the number; write only the number, in Ah/],
		['energy_wh', '1,234.5', /thousands separator; write the number without it, e\.g\. 1234\.5/],
		['energy_wh', '0', /Energy 0 Wh is out of range/],
		['dcir_mohm', '-1', /DC internal resistance -1 mΩ is out of range/],
		['ocv_v', '1500.5', /Open-circuit voltage 1500.5 V is out of range/],
		['cell_spread_mv', '-1', /must be at least 0 and at most 5000 mV/],
		['cell_spread_mv', '', /Cell voltage spread is empty/],
		['insulation_mohm', '1000001', /Insulation resistance 1000001 MΩ is out of range/],
		[
			'ambient_c',
			'-41',
			/Ambient temperature -41 °C is out of range: it must be at least -40 and at most 85 °C/
		]
	])('%s %j', (column, value, message) => {
		const errs = rowErrors({ [column]: value });
		expect(errs).toHaveLength(1);
		expect(errs[0].column).toBe(column);
		expect(errs[0].message).toMatch(message);
	});

	it('a decimal comma is read only when the file is `;`-separated', () => {
		expect(validateRowValues(raw({ capacity_ah: '45,2' }), 2, NOW, { decimalComma: true }).ok).toBe(
			true
		);
		expect(rowErrors({ capacity_ah: '1.234,5' }, { decimalComma: true })[0].message).toMatch(
			/e\.g\. 1234,5/
		);
	});

	it('DCIR: empty with no pulse columns, incomplete pulse, or an impossible pulse', () => {
		expect(rowErrors({ dcir_mohm: '' })[0].message).toMatch(
			/DC internal resistance is empty; enter it in mΩ, or fill the four pulse columns/
		);
		const partial = rowErrors({ dcir_mohm: '', pulse_u1_v: '3.3', pulse_i1_a: '56' });
		expect(partial.map((e) => e.column)).toEqual(['pulse_u2_v', 'pulse_i2_a']);
		const swapped = rowErrors({
			dcir_mohm: '',
			pulse_u1_v: '3.3',
			pulse_i1_a: '280',
			pulse_u2_v: '3.244',
			pulse_i2_a: '56'
		});
		expect(swapped).toEqual([
			{
				row: 7,
				column: 'dcir_mohm',
				message: expect.stringMatching(
					/cannot be computed from the pulse columns: The second pulse current I2 \(56 A\) must be higher/
				)
			}
		]);
	});

	it('reports every problem of a row at once', () => {
		expect(
			rowErrors({ serial: '', capacity_ah: 'x', insulation_mohm: '' }).map((e) => e.column)
		).toEqual(['serial', 'capacity_ah', 'insulation_mohm']);
	});
});

describe('parseTestedAt — ISO 8601 with offset', () => {
	it('reads offsets, fractions and a space instead of T', () => {
		const t = (s: string) => {
			const r = parseTestedAt(s);
			return r.ok ? r.date.toISOString() : r.message;
		};
		expect(t('2026-03-12T09:15:00+01:00')).toBe('2026-03-12T08:15:00.000Z');
		expect(t('2026-03-12 03:15:00.25-0500')).toBe('2026-03-12T08:15:00.250Z');
		expect(t('2026-03-12T08:15Z')).toBe('2026-03-12T08:15:00.000Z');
		expect(t('2024-02-29T08:15:00Z')).toBe('2024-02-29T08:15:00.000Z');
	});
});

describe('rowKey and duplicates', () => {
	const base = { serial: 'TW48-0001', testedAt: new Date('2026-03-12T08:15:00Z'), rig: 'RIG-2' };

	it('is the same for the same instant written with another offset, and differs by rig', () => {
		expect(rowKey(base)).toBe(rowKey({ ...base, testedAt: new Date('2026-03-12T09:15:00+01:00') }));
		expect(rowKey(base)).not.toBe(rowKey({ ...base, rig: 'RIG-3' }));
		expect(rowKey({ ...base, serial: 'A|B', rig: 'C' })).not.toBe(
			rowKey({ ...base, serial: 'A', rig: 'B|C' })
		);
	});

	it('validateFactoryCsv reports a repeated test on the later row, under the header as written', () => {
		const text = csv(
			'Serial,Tested At,Capacity (Ah),DCIR (mOhm),Cell spread (mV),Insulation (MOhm),Rig',
			'TW48-0001,2026-03-12T08:15:00Z,46.2,2.1,12,550,RIG-2',
			'TW48-0002,2026-03-12T08:20:00Z,0,2.1,12,550,RIG-2',
			'TW48-0001,2026-03-12T09:15:00+01:00,46.3,2.1,12,550,RIG-2'
		);
		const v = validateFactoryCsv(text, NOW);
		if (!v.ok) throw new Error(v.error);
		expect(v.rows.map((r) => r.row)).toEqual([2]);
		expect(v.errors).toEqual([
			{
				row: 3,
				column: 'Capacity (Ah)',
				message: expect.stringMatching(/^Capacity 0 Ah is out of range/)
			},
			{
				row: 4,
				column: 'Serial',
				message: 'Same serial, test time and rig as row 2; remove the duplicate row.'
			}
		]);
	});
});

describe('repeated tests in a file of many', () => {
	it('finds a repeat among earlier tests of the same serial, whatever the case, and only a true one', () => {
		const header =
			'Serial,Tested At,Capacity (Ah),DCIR (mOhm),Cell spread (mV),Insulation (MOhm),Rig';
		const r = (serial: string, at: string, rig: string) => `${serial},${at},46.2,2.1,12,550,${rig}`;
		const text = csv(
			header,
			r('TW48-0001', '2026-03-12T08:00:00Z', 'RIG-2'), // row 2
			r('TW48-0001', '2026-03-12T09:00:00Z', 'RIG-2'), // row 3: another instant
			r('TW48-0001', '2026-03-12T10:00:00Z', 'RIG-2'), // row 4
			r('TW48-0001', '2026-03-12T09:00:00Z', 'RIG-3'), // row 5: same instant, other rig
			r('tw48-0001', '2026-03-12T09:00:00Z', 'RIG-2'), // row 6: row 3 again, in lower case
			r('TW48-0002', '2026-03-12T08:00:00Z', ''), // row 7: no rig
			r('TW48-0002', '2026-03-12T08:00:00.000Z', ''), // row 8: row 7 again
			r('TW48-0001', '2026-03-12T08:00:00Z', 'RIG-2') // row 9: row 2 again, behind three more
		);
		const v = validateFactoryCsv(text, NOW);
		if (!v.ok) throw new Error(v.error);
		expect(v.rows.map((x) => x.row)).toEqual([2, 3, 4, 5, 7]);
		expect(v.errors.map((e) => [e.row, e.message])).toEqual([
			[6, 'Same serial, test time and rig as row 3; remove the duplicate row.'],
			[8, 'Same serial, test time and rig as row 7; remove the duplicate row.'],
			[9, 'Same serial, test time and rig as row 2; remove the duplicate row.']
		]);
	});

	it('keeps every test of 3,000 serials tested twice apart (past the first table of 1,024)', () => {
		const header =
			'Serial,Tested At,Capacity (Ah),DCIR (mOhm),Cell spread (mV),Insulation (MOhm),Rig';
		const lines: string[] = [];
		for (let pass = 0; pass < 2; pass++)
			for (let i = 0; i < 3000; i++)
				lines.push(
					`TW48-${String(i).padStart(4, '0')},2026-03-12T0${8 + pass}:00:00Z,46.2,2.1,12,550,RIG-2`
				);
		// The first row of the file once more at the end: the only repeat.
		lines.push(lines[0]);
		const v = validateFactoryCsv(csv(header, ...lines), NOW);
		if (!v.ok) throw new Error(v.error);
		expect(v.rows).toHaveLength(6000);
		expect(v.errors).toEqual([
			{
				row: 6002,
				column: 'Serial',
				message: 'Same serial, test time and rig as row 2; remove the duplicate row.'
			}
		]);
	});
});

describe('error report CSV — OWASP CSV injection (from memory) and RFC 4180 writing', () => {
	it('neutralises cells that a spreadsheet would run as a formula', () => {
		expect(['=1+1', '+41', '-2', '@SUM(A1)', '\t=1', '\r=1'].map(neutraliseCell)).toEqual([
			"'=1+1",
			"'+41",
			"'-2",
			"'@SUM(A1)",
			"'\t=1",
			"'\r=1"
		]);
		expect(neutraliseCell('Capacity 0 Ah')).toBe('Capacity 0 Ah');
		expect(neutraliseCell('a=b')).toBe('a=b');
	});

	it('writes row,column,message with a BOM and CRLF, and reads back to the same errors', () => {
		const errors = [
			{
				row: 2,
				column: '=HYPERLINK("http://x")',
				message: 'Capacity "45,2" has a decimal comma; write 45.2.'
			},
			{ row: 3, column: 'Rig', message: '-1 is not a rig\r\nsecond line' }
		];
		const out = toErrorReportCsv(errors);
		expect(out.startsWith('\uFEFFrow,column,message\r\n')).toBe(true);
		expect(out.endsWith('\r\n')).toBe(true);
		expect(out).toContain(
			'2,"\'=HYPERLINK(""http://x"")","Capacity ""45,2"" has a decimal comma; write 45.2."'
		);
		const back = Papa.parse<string[]>(out.slice(1), { skipEmptyLines: true }).data;
		expect(back).toEqual([
			['row', 'column', 'message'],
			['2', '\'=HYPERLINK("http://x")', 'Capacity "45,2" has a decimal comma; write 45.2.'],
			['3', 'Rig', "'-1 is not a rig\r\nsecond line"]
		]);
		expect(toErrorReportCsv([], { bom: false })).toBe('row,column,message\r\n');
	});
});

describe('validateFactoryCsv — the one-pass reader agrees with the row checker', () => {
	// Independent check: every row is also judged alone by validateRowValues (the regular
	// expression reader with all its messages); the file reader's fast path must agree.
	// Dates: leap days by the Gregorian rule (ISO 8601 / ISO 8601-1:2019 §4.3.2.1 calendar).
	const cases: Record<string, string>[] = [
		{},
		{ tested_at: '2028-02-29T23:59:59Z' }, // leap year
		{ tested_at: '2027-02-29T08:00:00Z' }, // not a leap year
		{ tested_at: '2000-02-29T00:00:00Z' }, // divisible by 400: leap
		{ tested_at: '2100-02-29T00:00:00Z' }, // divisible by 100 only: not leap (and in the future)
		{ tested_at: '2000-01-01T00:00:00Z' }, // the earliest accepted instant
		{ tested_at: '1999-12-31T23:59:59Z' },
		{ tested_at: '2026-03-12T12:05:00Z' }, // now + 5 min of clock skew: accepted
		{ tested_at: '2026-03-12T12:05:00.001Z' }, // 1 ms past it
		{ tested_at: '2026-03-12T08:15:00.5Z' },
		{ tested_at: '2026-03-12T08:15:00.123456Z' },
		{ tested_at: '2026-03-12t08:15:00z' },
		{ tested_at: '2026-03-12T24:00:00Z' },
		{ tested_at: '2026-04-31T08:00:00Z' },
		{ tested_at: '2026-03-12T09:15:00+01:00' },
		{ capacity_ah: '0' },
		{ capacity_ah: '10000' },
		{ capacity_ah: '10000.0001' },
		{ cell_spread_mv: '0' },
		{ ambient_c: '-40' },
		{ ambient_c: '-40.1' },
		{ ambient_c: '' },
		{ energy_wh: '' },
		{ dcir_mohm: '' },
		{ dcir_mohm: '1e1' },
		{ dcir_mohm: '0x10' },
		{ insulation_mohm: ' 550 ' },
		{ serial: 'tw48-0002' },
		{ serial: 'TW48\u00070003' },
		{ rig: '' },
		{ operator: '  ' }
	];
	it('gives the same value or the same errors for each row', () => {
		const cols = HEADER.split(',');
		const lines = cases.map((c, i) => {
			const r = raw({ serial: `TW48-${String(i + 10).padStart(4, '0')}`, ...c });
			return cols.map((k) => (r as Record<string, string>)[k]).join(',');
		});
		const file = validateFactoryCsv(csv(HEADER, ...lines) + '\r\n', NOW);
		if (!file.ok) throw new Error(file.error);
		lines.forEach((_, i) => {
			const alone = validateRowValues(
				raw({ serial: `TW48-${String(i + 10).padStart(4, '0')}`, ...cases[i] }),
				i + 2,
				NOW
			);
			const got = file.rows.find((r) => r.row === i + 2);
			if (alone.ok) expect(got?.value).toEqual(alone.value);
			else {
				expect(got).toBeUndefined();
				expect(file.errors.filter((e) => e.row === i + 2).map((e) => e.message)).toEqual(
					alone.errors.map((e) => e.message)
				);
			}
		});
	});

	it('a quote never closed in a later slice names its row (line number of the file)', () => {
		// More than 64 KB, so the rows are read in several slices; row 2,502 of the file (data
		// row 2,501 after the header) opens a quote that never closes.
		const lines: string[] = [];
		for (let i = 0; i < 3000; i++)
			lines.push(
				`TW48-${String(i).padStart(5, '0')},2026-03-12T08:15:00Z,46.2,,2.1,,12,550,,RIG-2,${i === 2500 ? '"jm' : 'jm'}`
			);
		const text = csv(HEADER, ...lines) + '\r\n';
		expect(text.length).toBeGreaterThan(2 * 64 * 1024);
		const file = validateFactoryCsv(text, NOW);
		expect(file.ok).toBe(false);
		if (file.ok) return;
		expect(file.error).toMatch(/^Row 2502 has a double quote \("\) that is never closed/);
	});

	it('reads a file of many slices with quoted line breaks at every position the same as whole', () => {
		// More than two 256 KB slices; a quoted operator name with a CRLF inside on every 7th row.
		const lines: string[] = [];
		for (let i = 0; i < 9000; i++) {
			const op = i % 7 === 0 ? '"J. ""Jo"" Vale\r\nnight shift"' : 'jm';
			lines.push(
				`TW48-${String(i).padStart(5, '0')},2026-03-12T08:15:00Z,46.2,,2.1,,12,550,,RIG-2,${op}`
			);
		}
		const text = csv(HEADER, ...lines) + '\r\n';
		expect(text.length).toBeGreaterThan(2 * 256 * 1024);
		const file = validateFactoryCsv(text, NOW);
		if (!file.ok) throw new Error(file.error);
		// Papa Parse on the whole text at once is the reference for where records start.
		const whole = Papa.parse<string[]>(text, { delimiter: ',' }).data;
		expect(file.rows).toHaveLength(9000);
		expect(file.rows[7].row).toBe(9);
		expect(file.rows[8999].value.serial).toBe(whole[9000][0]);
		expect(file.rows[7].value.operator).toBe(whole[8][10].trim());
		expect(file.errors).toEqual([]);
	});
});
