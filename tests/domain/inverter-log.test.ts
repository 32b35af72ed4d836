import { describe, expect, it } from 'vitest';
import {
	InverterLogError,
	PROBLEMS_PER_KIND,
	detectColumns,
	summariseLog,
	type LogMapping
} from '../../src/lib/domain/inverter-log';
import { equivalentFullCycles } from '../../src/lib/domain/warranty';

const cumulativeKWh: LogMapping = {
	timestampColumn: 'Time',
	energyColumn: 'Battery Discharge Total (kWh)',
	energyUnit: 'kWh',
	energyKind: 'cumulative',
	tempColumn: 'Battery Temp (°C)'
};

describe('detectColumns', () => {
	it('suggests timestamp, discharge energy in kWh, charge energy and cell temperature by name', () => {
		expect(
			detectColumns([
				'Time',
				'Battery Discharge Total (kWh)',
				'Battery Charge Total (kWh)',
				'Battery Temp (°C)',
				'Inverter Temp (°C)'
			])
		).toEqual({
			timestamp: 'Time',
			dischargeEnergyKWh: 'Battery Discharge Total (kWh)',
			chargeEnergyKWh: 'Battery Charge Total (kWh)',
			cellTempC: 'Battery Temp (°C)',
			energyKind: 'cumulative'
		});
	});

	it('reads Wh units, abbreviations and max/avg temperature columns', () => {
		const g = detectColumns([
			'\uFEFFtimestamp',
			'E_Dischg_Interval[Wh]',
			'BMS_MaxCellTemp',
			'BMS_AvgCellTemp',
			'Ambient temp'
		]);
		expect(g.timestamp).toBe('timestamp');
		expect(g.dischargeEnergyWh).toBe('E_Dischg_Interval[Wh]');
		expect(g.dischargeEnergyKWh).toBeUndefined();
		expect(g.energyKind).toBe('interval');
		expect(g.maxCellTempC).toBe('BMS_MaxCellTemp');
		expect(g.cellTempC).toBe('BMS_AvgCellTemp');
	});

	it('suggests nothing it cannot tell: no unit, no battery temperature', () => {
		expect(
			detectColumns(['Date', 'Discharge energy', 'Inverter temperature', 'PV power (W)'])
		).toEqual({ timestamp: 'Date' });
		expect(detectColumns([])).toEqual({});
	});
});

describe('summariseLog', () => {
	it('cumulative counter: throughput = last − first, in Wh from kWh; temperatures averaged', () => {
		const csv = [
			'Time,Battery Discharge Total (kWh),Battery Temp (°C)',
			'2024-01-01 00:00,1000.0,20',
			'2024-01-01 01:00,1001.5,24',
			'2024-01-01 02:00,1003.0,28'
		].join('\n');
		const s = summariseLog(csv, cumulativeKWh);
		expect(s).toEqual({
			rows: 3,
			firstAt: '2024-01-01 00:00',
			lastAt: '2024-01-01 02:00',
			throughputWh: 3000,
			avgTempC: 24,
			maxTempC: 28,
			// Hourly readings: each holds one hour, the last the usual interval (one hour).
			temperatureProfile: [
				{ tempC: 20, hours: 1 },
				{ tempC: 24, hours: 1 },
				{ tempC: 28, hours: 1 }
			],
			problems: []
		});
	});

	it('cumulative counter reset: a drop starts a new segment and is reported with its row', () => {
		const csv = [
			'Time,Battery Discharge Total (kWh),Battery Temp (°C)',
			'2024-01-01,100,25',
			'2024-01-02,150,25',
			'2024-01-03,200,25',
			'2024-01-04,5,25',
			'2024-01-05,25,25',
			'2024-01-06,45,25'
		].join('\n');
		const s = summariseLog(csv, cumulativeKWh);
		// (200 − 100) + (45 − 5) = 140 kWh
		expect(s.throughputWh).toBe(140000);
		expect(s.problems).toEqual([
			'Row 5: the energy counter dropped from 200 to 5 kWh; taken as a reset and counted as a new segment (energy just before the reset is not known).'
		]);
	});

	it('interval values are summed; negative intervals are left out and reported', () => {
		const csv = [
			'ts,energy_wh',
			'2024-01-01T00:00,100',
			'2024-01-01T00:15,250.5',
			'2024-01-01T00:30,-3',
			'2024-01-01T00:45,49.5'
		].join('\n');
		const s = summariseLog(csv, {
			timestampColumn: 'ts',
			energyColumn: 'energy_wh',
			energyUnit: 'Wh',
			energyKind: 'interval'
		});
		expect(s.throughputWh).toBe(400);
		expect(s.avgTempC).toBeNull();
		expect(s.maxTempC).toBeNull();
		expect(s.problems).toEqual(['Row 4: negative interval energy -3 Wh was left out.']);
	});

	it('1 433 600 Wh of logged discharge over a 14 336 Wh battery is 100.0 EFC (docs/references.md §2, calc)', () => {
		const csv = [
			'Time,Battery Discharge Total (kWh),Battery Temp (°C)',
			'2024-01-01,0,25',
			'2024-06-01,716.8,30',
			'2024-12-31,1433.6,35'
		].join('\r\n');
		const s = summariseLog(csv, cumulativeKWh);
		expect(s.throughputWh).toBe(1433600);
		expect(equivalentFullCycles({ throughputWh: s.throughputWh!, usableWh: 14336 })).toBeCloseTo(
			100,
			10
		);
	});

	it('reports non-numeric values with their rows (header = row 1) and caps the list', () => {
		const lines = ['Time,Battery Discharge Total (kWh),Battery Temp (°C)', '2024-01-01 00:00,0,20'];
		for (let i = 0; i < PROBLEMS_PER_KIND + 3; i++)
			lines.push(`2024-01-01 01:${String(i).padStart(2, '0')},n/a,21`);
		lines.push('2024-01-01 02:00,2,hot', '2024-01-01 03:00,,22');
		const s = summariseLog(lines.join('\n'), cumulativeKWh);
		expect(s.rows).toBe(PROBLEMS_PER_KIND + 6);
		expect(s.throughputWh).toBe(2000);
		expect(s.problems[0]).toBe('Row 3: energy value "n/a" is not a number.');
		expect(s.problems).toContain('… and 4 more rows with a missing or non-numeric energy value.');
		expect(s.problems.filter((p) => p.includes('energy value "n/a"'))).toHaveLength(
			PROBLEMS_PER_KIND
		);
		expect(s.problems).toContain(
			`Row ${PROBLEMS_PER_KIND + 6}: temperature "hot" is not a number.`
		);
		expect(s.maxTempC).toBe(22);
	});

	it('names an unknown column and lists the columns found', () => {
		const csv = 'Time,Energy (kWh)\n2024-01-01,1\n';
		expect(() => summariseLog(csv, cumulativeKWh)).toThrow(InverterLogError);
		expect(() => summariseLog(csv, cumulativeKWh)).toThrow(
			'The energy column "Battery Discharge Total (kWh)" is not in the file. Columns found: "Time", "Energy (kWh)".'
		);
		expect(() =>
			summariseLog(csv, { ...cumulativeKWh, energyColumn: 'Energy (kWh)', tempColumn: 'Cell temp' })
		).toThrow('The temperature column "Cell temp" is not in the file.');
	});

	it('refuses an empty file and a file with only a header', () => {
		expect(() => summariseLog('', cumulativeKWh)).toThrow('The file is empty.');
		expect(() => summariseLog('\uFEFF \r\n', cumulativeKWh)).toThrow('The file is empty.');
		expect(() =>
			summariseLog('Time,Battery Discharge Total (kWh),Battery Temp (°C)\n\n', cumulativeKWh)
		).toThrow('The file has a header row but no data rows.');
	});

	it('reads semicolon exports with decimal commas, a byte-order mark and CRLF (RFC 4180 line ends, docs/references.md §7)', () => {
		const csv =
			'\uFEFFTime;Battery Discharge Total (kWh);Battery Temp (°C)\r\n2024-01-01 00:00;10,5;20,5\r\n2024-01-02 00:00;12,0;21,5\r\n';
		const s = summariseLog(csv, cumulativeKWh);
		expect(s.rows).toBe(2);
		expect(s.throughputWh).toBe(1500);
		expect(s.avgTempC).toBe(21);
	});

	it('reads quoted fields with commas and doubled quotes (RFC 4180, docs/references.md §7)', () => {
		const csv =
			'Time,Note,Energy (Wh)\n2024-01-01,"start, ""cold""",10\n2024-01-02,"line\nbreak",20\n';
		const s = summariseLog(csv, {
			timestampColumn: 'Time',
			energyColumn: 'Energy (Wh)',
			energyUnit: 'Wh',
			energyKind: 'interval'
		});
		expect(s.rows).toBe(2);
		expect(s.throughputWh).toBe(30);
		expect(s.problems).toEqual([]);
	});

	it('flags rows out of time order, and a cumulative log with a single reading', () => {
		const csv = [
			'Time,Battery Discharge Total (kWh),Battery Temp (°C)',
			'2024-01-02 00:00,5,20',
			'2024-01-01 00:00,,20'
		].join('\n');
		const s = summariseLog(csv, cumulativeKWh);
		expect(s.throughputWh).toBe(0);
		expect(s.problems).toContain(
			'Row 3: 2024-01-01 00:00 is earlier than the row before; cumulative throughput assumes the rows are in time order.'
		);
		expect(s.problems).toContain(
			'Only one energy reading: a cumulative counter needs two to show any throughput.'
		);
	});

	it('gives no throughput when no row has a usable energy value', () => {
		const csv = [
			'Time,Battery Discharge Total (kWh),Battery Temp (°C)',
			'2024-01-01,x,',
			'2024-01-02,y,'
		].join('\n');
		const s = summariseLog(csv, cumulativeKWh);
		expect(s.throughputWh).toBeNull();
		expect(s.problems).toContain(
			'No row has a usable value in "Battery Discharge Total (kWh)", so the throughput is unknown.'
		);
		expect(s.problems).toContain('No row has a usable temperature in "Battery Temp (°C)".');
	});
});
