/**
 * Every regular expression that runs on user input is fed a 200 KB worst case and must
 * answer quickly. The limit (1 s, the best of three tries) is generous on purpose: a linear
 * scan of 200 KB takes a few milliseconds, a quadratic backtracking one 12–18 s (OWASP,
 * "Regular expression Denial of Service – ReDoS"); a loaded 2-core machine must not make it
 * flaky. The point is the shape of the cost, not a speed target.
 */
import { describe, expect, it } from 'vitest';
import {
	matchHeader,
	parseFactoryCsv,
	parseTestedAt,
	validateFactoryCsv
} from '../../src/lib/domain/factory-csv';
import { detectColumns, summariseLog } from '../../src/lib/domain/inverter-log';
import { extractSerialFromScan, parseSerial } from '../../src/lib/domain/serial';
import { siteSchema, systemSchema } from '../../src/lib/schemas/site';
import { forgotSchema, inviteSchema, signInSchema } from '../../src/lib/schemas/auth';
import { dealerSchema } from '../../src/lib/schemas/dealer';
import { parseFleetQuery } from '../../src/lib/schemas/fleet';
import { traceQuerySchema } from '../../src/lib/schemas/trace';
import { serialListSchema } from '../../src/lib/schemas/claim';
import { buildSchema } from '../../src/lib/schemas/build';
import { readDecimal } from '../../src/lib/schemas/commissioning';
import { claimEvidenceSchema } from '../../src/lib/schemas/warranty-assess';

const SIZE = Number(process.env.REDOS_SIZE ?? 200_000);
const LIMIT_MS = 1000;

/** The best of three timings: a busy machine can only slow a try down, never speed it up. */
function elapsed(fn: () => unknown): number {
	let best = Infinity;
	for (let i = 0; i < 3; i++) {
		const t = performance.now();
		fn();
		best = Math.min(best, performance.now() - t);
	}
	return best;
}

/** Strings that make backtracking engines work hardest on the patterns used here. */
const worst: Record<string, string> = {
	openParens: '('.repeat(SIZE),
	openBrackets: '['.repeat(SIZE),
	parenSpaces: '( '.repeat(SIZE / 2),
	dots: 'a.'.repeat(SIZE / 2),
	emailDots: 'a@' + 'a.'.repeat(SIZE / 2 - 1),
	ats: '@'.repeat(SIZE),
	atDots: 'a@a'.repeat(SIZE / 3) + '.',
	digits: '1'.repeat(SIZE),
	digitsX: '1'.repeat(SIZE) + 'x',
	thousands: '1' + ',123'.repeat(SIZE / 4) + '.x',
	commas: '1,'.repeat(SIZE / 2),
	spaces: 'a' + ' '.repeat(SIZE) + 'a',
	dateSpaces: '2026-01-01' + ' '.repeat(SIZE) + 'x',
	slashes: '/'.repeat(SIZE) + 'x',
	localDate: '1.1.2026' + '1'.repeat(SIZE),
	underscores: '_'.repeat(SIZE) + '-',
	wordy: 'discharge '.repeat(SIZE / 10),
	pl: 'PL' + 'A'.repeat(SIZE),
	plusDigits: '+' + '1 '.repeat(SIZE / 2)
};

const cases = Object.entries(worst);

describe('CSV headers and cells of factory test files', () => {
	it.each(cases)('matchHeader with %s runs in linear time', (_name, s) => {
		expect(elapsed(() => matchHeader(s))).toBeLessThan(LIMIT_MS);
		expect(elapsed(() => matchHeader(s + ')'))).toBeLessThan(LIMIT_MS);
		expect(elapsed(() => matchHeader('capacity' + s + ']'))).toBeLessThan(LIMIT_MS);
	});

	it.each(cases)('a file whose header is %s is refused quickly', (_name, s) => {
		const text = `serial,tested_at,${s.replaceAll('"', '')}\nPL48-26-000123F,2026-03-12T08:15:00Z,1\n`;
		expect(elapsed(() => parseFactoryCsv(text))).toBeLessThan(LIMIT_MS);
	});

	it.each(cases)('a cell holding %s is answered quickly in every column', (_name, s) => {
		const cell = `"${s.replaceAll('"', '')}"`;
		const header =
			'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
		const row = Array(11).fill(cell).join(',');
		const t = elapsed(() =>
			validateFactoryCsv(`${header}\n${row}\n`, new Date('2026-03-13T00:00:00Z'))
		);
		expect(t).toBeLessThan(LIMIT_MS * 2); // 11 cells of 200 KB each
	});

	it.each(cases)('parseTestedAt with %s', (_name, s) => {
		expect(elapsed(() => parseTestedAt(s))).toBeLessThan(LIMIT_MS);
		expect(elapsed(() => parseTestedAt('2026-03-12T08:15:00' + s))).toBeLessThan(LIMIT_MS);
	});
});

describe('inverter logs', () => {
	it.each(cases)('detectColumns and summariseLog with a header of %s', (_name, s) => {
		const header = s.replaceAll('"', '').replaceAll(',', ';');
		expect(elapsed(() => detectColumns([header, 'x' + header]))).toBeLessThan(LIMIT_MS);
		const text = `Time,Energy (kWh),"${header}"\n2026-01-01 00:00,"${header}","${header}"\n`;
		expect(
			elapsed(() => {
				try {
					summariseLog(text, {
						timestampColumn: 'Time',
						energyColumn: 'Energy (kWh)',
						energyUnit: 'kWh',
						energyKind: 'cumulative',
						tempColumn: header
					});
				} catch {
					/* a refusal is fine; its speed is what is measured */
				}
			})
		).toBeLessThan(LIMIT_MS);
	});
});

describe('form fields and query strings', () => {
	const site = (ownerContact: string) => ({
		name: 'Willow Lane farm',
		ownerName: 'A. Owner',
		ownerContact,
		address: '1 Lane, Port Halden',
		application: 'backup',
		dealerOrgId: ''
	});

	it.each(cases)('the site form’s owner contact with %s is refused quickly', (_name, s) => {
		let ok = true;
		expect(elapsed(() => (ok = siteSchema.safeParse(site(s)).success))).toBeLessThan(LIMIT_MS);
		expect(ok).toBe(false);
	});

	it.each(cases)('e-mail fields with %s', (_name, s) => {
		for (const schema of [signInSchema, forgotSchema, inviteSchema, dealerSchema]) {
			const t = elapsed(() =>
				schema.safeParse({ email: s, contactEmail: s, password: s, name: s, role: 'admin' })
			);
			expect(t).toBeLessThan(LIMIT_MS);
		}
	});

	it.each(cases)('every text field of the system, build and claim forms with %s', (_name, s) => {
		const fields = {
			name: s,
			modelCode: s,
			series: s,
			parallel: s,
			inverterName: s,
			inverterMinV: s,
			inverterMaxV: s,
			serial: s,
			cellLots: s,
			notes: s
		};
		expect(elapsed(() => systemSchema.safeParse(fields))).toBeLessThan(LIMIT_MS);
		expect(elapsed(() => buildSchema.safeParse(fields))).toBeLessThan(LIMIT_MS);
		expect(elapsed(() => serialListSchema.safeParse(s))).toBeLessThan(LIMIT_MS);
		expect(elapsed(() => readDecimal(s))).toBeLessThan(LIMIT_MS);
		expect(
			elapsed(() =>
				claimEvidenceSchema.safeParse({ measuredCapacityAh: s, lastDay: s, eventsOutsideLimits: s })
			)
		).toBeLessThan(LIMIT_MS);
	});

	it.each(cases)('scanned text and serials with %s', (_name, s) => {
		expect(elapsed(() => parseSerial(s))).toBeLessThan(LIMIT_MS);
		expect(
			elapsed(() => extractSerialFromScan(s, 'https://register.tidewater.example'))
		).toBeLessThan(LIMIT_MS);
		expect(
			elapsed(() =>
				extractSerialFromScan(
					'https://register.tidewater.example/m/' + s,
					'https://register.tidewater.example'
				)
			)
		).toBeLessThan(LIMIT_MS);
	});

	it.each(cases)('fleet and trace query strings with %s', (_name, s) => {
		const params = new URLSearchParams({ q: s, from: s, to: s, builtFrom: s, builtTo: s, lot: s });
		expect(elapsed(() => parseFleetQuery(params))).toBeLessThan(LIMIT_MS);
		expect(
			elapsed(() => traceQuerySchema.safeParse({ lot: s, model: s, builtFrom: s, builtTo: s }))
		).toBeLessThan(LIMIT_MS);
	});
});
