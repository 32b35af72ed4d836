import { gs1CheckDigit } from '$lib/domain/gs1';

/**
 * The invented TC-HC range of Tidewater Cellworks: one energy per module (~2.4 kWh)
 * in three voltage variants. Every number here is invented for the demo; the data-sheet
 * internal resistances sit a little below the factory-test limits.
 */
const gtin = (base13: string) => {
	const body = base13.padStart(13, '0');
	return body + String(gs1CheckDigit(body));
};

const common = {
	cellMinV: 1.8,
	cellNominalV: 2.35,
	cellMaxV: 2.75,
	usableWh: 2300,
	maxContinuousC: 3,
	burstC: 8,
	burstSeconds: 10,
	chargeTempMinC: -30,
	chargeTempMaxC: 55,
	dischargeTempMinC: -40,
	dischargeTempMaxC: 60,
	maxCellSpreadMv: 20,
	minInsulationMohm: 100,
	warrantyYears: 15,
	ratedCycles: 20000,
	referenceTempC: 25,
	endRetentionPct: 80,
	hotTempC: 55,
	hotRatedCycles: 4000
};

export const DEMO_MODELS = [
	{
		...common,
		code: 'TC-HC-12',
		name: 'TC-HC 12 V module',
		variant: '12',
		cellsSeries: 6,
		ratedAh: 170,
		massKg: 24.5,
		gtin: null,
		minCapacityAh: 165,
		maxDcirMohm: 1.6,
		internalResistanceMohm: 1.5
	},
	{
		...common,
		code: 'TC-HC-24',
		name: 'TC-HC 24 V module',
		variant: '24',
		cellsSeries: 11,
		ratedAh: 93,
		massKg: 25.0,
		gtin: gtin('0952123460001'),
		minCapacityAh: 90,
		maxDcirMohm: 3.2,
		internalResistanceMohm: 3.0
	},
	{
		...common,
		code: 'TC-HC-48',
		name: 'TC-HC 48 V module',
		variant: '48',
		cellsSeries: 22,
		ratedAh: 46.5,
		massKg: 25.5,
		gtin: gtin('0952123460002'),
		minCapacityAh: 45,
		maxDcirMohm: 6.4,
		internalResistanceMohm: 6.0
	}
];
