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

type Item = { value: unknown; unit: string | null };
const plain = (value: unknown): Item => ({ value, unit: null });

/** Passport items every TC-HC model shares (all invented for the demo). */
const identity: Record<string, Item> = {
	batteryCategory: plain('stationary'),
	manufacturerAddress: plain({
		streetAddress: '1 Foundry Quay',
		postalCode: 'PH-4410',
		addressCountry: 'Halden Coast (invented)'
	}),
	manufacturerIdentifier: plain('EO-TCW-0417'),
	manufacturingPlace: plain({
		streetAddress: 'Cell Hall 2, 1 Foundry Quay',
		postalCode: 'PH-4410',
		addressCountry: 'Halden Coast (invented)'
	}),
	chemistryShortName: plain('LTO-HC'),
	chemistryClearName: plain(
		'Lithium titanate oxide anode with hybrid-capacitor carbon, lithium manganese oxide cathode'
	)
};

const DOCS = 'https://tidewater.example/passport';
const full = (
	powerAt80Kw: number,
	powerAt20Kw: number,
	dcirMohm: number
): Record<string, Item> => ({
	...identity,
	powerAt80SoC: { value: powerAt80Kw, unit: 'kW' },
	powerAt20SoC: { value: powerAt20Kw, unit: 'kW' },
	initialInternalResistance: { value: dcirMohm, unit: 'mΩ' },
	initialSelfDischarge: { value: 1.5, unit: '%/month' },
	roundtripEfficiency: { value: 96, unit: '%' },
	expectedLifetimeYears: { value: 25, unit: 'years' },
	lifetimeReferenceTest: plain(`${DOCS}/tc-hc-cycle-life-test.pdf`),
	cRateLifeCycleTest: { value: 1, unit: 'C' },
	temperatureRangeIdleState: { value: { min: -40, max: 60 }, unit: '°C' },
	hazardousSubstances: plain([
		{
			name: 'Lithium hexafluorophosphate',
			cas: '21324-40-3',
			hazardClass: 'AcuteToxicity',
			concentrationPct: 1.2,
			location: 'Electrolyte',
			impact: 'Toxic if swallowed; releases hydrogen fluoride with water or heat.'
		}
	]),
	criticalRawMaterials: plain([
		{ name: 'Lithium', cas: '7439-93-2', massG: 180, location: 'Cathode and anode' },
		{ name: 'Titanium', cas: '7440-32-6', massG: 1450, location: 'Anode' },
		{ name: 'Manganese', cas: '7439-96-5', massG: 1320, location: 'Cathode' }
	]),
	carbonFootprint: { value: 0.0085, unit: 'kg CO2e/kWh' },
	carbonFootprintPerLifecycleStage: plain([
		{ stage: 'RawMaterialExtraction', value: 0.0052 },
		{ stage: 'MainProduction', value: 0.0026 },
		{ stage: 'Distribution', value: 0.0003 },
		{ stage: 'Recycling', value: 0.0004 }
	]),
	carbonFootprintStudy: plain(`${DOCS}/tc-hc-carbon-footprint-study.pdf`),
	recycledContent: plain([{ material: 'Lithium', preConsumerShare: 4, postConsumerShare: 2 }]),
	wastePrevention: plain(`${DOCS}/end-of-life#longer-use`),
	separateCollection: plain(`${DOCS}/end-of-life#collection`),
	informationOnCollection: plain(`${DOCS}/end-of-life#take-back`),
	safetyInstructions: plain(`${DOCS}/tc-hc-safety-instructions.pdf`),
	extinguishingAgent: plain([
		{ agent: 'Water spray in large quantities' },
		{ agent: 'Carbon dioxide' }
	]),
	dismantlingManual: plain(`${DOCS}/tc-hc-dismantling-manual.pdf`)
});

/**
 * The passport items of the demo models. Deliberately not provided, so the passport shows
 * how a gap looks: the carbon footprint performance class (no classes exist yet), the
 * renewable content and the round-trip efficiency at half the cycle life for every model,
 * and for the newer TC-HC-12 everything but its identity and chemistry.
 */
export const DEMO_PASSPORT_ITEMS: Record<string, Record<string, Item>> = {
	'TC-HC-48': full(16.8, 13.9, 5.1),
	'TC-HC-24': full(16.5, 13.6, 2.6),
	'TC-HC-12': identity
};
