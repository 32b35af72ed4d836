/**
 * The battery passport items a model's admin enters, beyond what the model record already
 * holds (mass, rated capacity, voltages, temperatures, power, cycle life and warranty).
 * Each names the Annex XIII point it serves (Regulation (EU) 2023/1542) and the Battery Pass
 * data model v1.2.0 attribute it fills. Each number is entered with its unit and converted
 * to the unit the data model states for the attribute. An item left empty is stored as
 * nothing and shown as "not yet provided": no value is ever filled in for it.
 */
import { readDecimal } from './decimal';

export type PassportSection =
	| 'generalProductInformation'
	| 'performance'
	| 'materialComposition'
	| 'carbonFootprint'
	| 'circularity';

export interface UnitOption {
	unit: string;
	/** Multiply the entered value by this to get the canonical unit. */
	factor: number;
}

export interface TableColumn {
	key: string;
	label: string;
	type: 'text' | 'number' | 'cas' | 'choice';
	options?: readonly string[];
	min?: number;
	max?: number;
}

export type ItemKind =
	| { type: 'number'; canonical: string; units: UnitOption[]; min?: number; max?: number }
	| { type: 'text' }
	| { type: 'uri' }
	| { type: 'choice'; options: readonly string[] }
	| { type: 'address' }
	| { type: 'range'; unit: string }
	| { type: 'table'; columns: TableColumn[] };

export interface PassportItemDef {
	key: string;
	section: PassportSection;
	label: string;
	annex: string;
	kind: ItemKind;
	hint?: string;
	/** Only the restricted tiers see it (Annex XIII §2: persons with a legitimate interest). */
	restricted?: boolean;
}

const pct = (min = 0, max = 100): ItemKind => ({
	type: 'number',
	canonical: '%',
	units: [{ unit: '%', factor: 1 }],
	min,
	max
});
const power: ItemKind = {
	type: 'number',
	canonical: 'kW',
	units: [
		{ unit: 'W', factor: 0.001 },
		{ unit: 'kW', factor: 1 }
	],
	min: 0
};
const perKwh: ItemKind = {
	type: 'number',
	canonical: 'kg CO2e/kWh',
	units: [{ unit: 'kg CO2e/kWh', factor: 1 }],
	min: 0
};

/** CAS registry number as the data model constrains it (MaterialComposition 1.2.0, CASNumberConstraint). */
export const CAS_PATTERN = /^\d{2,7}-\d{2}-\d$/;
/** Hazard classes of the data model's HazardousSubstanceClassChrateristicEnum (v1.2.0). */
export const HAZARD_CLASSES = [
	'AcuteToxicity',
	'SkinCorrosionOrIrritation',
	'EyeDamageOrIrritation'
] as const;
/** Life-cycle stages of the data model's LifecycleStage enumeration (CarbonFootprint 1.2.0). */
export const LIFECYCLE_STAGES = [
	'RawMaterialExtraction',
	'MainProduction',
	'Distribution',
	'Recycling'
] as const;
/** Materials of the data model's RecycledMaterial enumeration (Circularity 1.2.0). */
export const RECYCLED_MATERIALS = ['Cobalt', 'Nickel', 'Lithium', 'Lead'] as const;
export const BATTERY_CATEGORIES = ['stationary', 'industrial'] as const;

export const PASSPORT_ITEMS: PassportItemDef[] = [
	{
		key: 'batteryCategory',
		section: 'generalProductInformation',
		label: 'Battery category',
		annex: 'Annex VI Part A(2)',
		kind: { type: 'choice', options: BATTERY_CATEGORIES }
	},
	{
		key: 'manufacturerAddress',
		section: 'generalProductInformation',
		label: 'Manufacturer’s postal address',
		annex: 'Annex VI Part A(1)',
		kind: { type: 'address' }
	},
	{
		key: 'manufacturerIdentifier',
		section: 'generalProductInformation',
		label: 'Manufacturer’s operator identifier',
		annex: 'Annex VI Part A(1)',
		kind: { type: 'text' },
		hint: 'The economic operator identifier the assembler is registered under.'
	},
	{
		key: 'manufacturingPlace',
		section: 'generalProductInformation',
		label: 'Manufacturing place',
		annex: 'Annex VI Part A(3)',
		kind: { type: 'address' }
	},
	{
		key: 'powerAt80SoC',
		section: 'performance',
		label: 'Original power capability at 80 % state of charge',
		annex: 'Annex XIII §1(c), Annex IV Part B(4)',
		kind: power
	},
	{
		key: 'powerAt20SoC',
		section: 'performance',
		label: 'Original power capability at 20 % state of charge',
		annex: 'Annex XIII §1(c), Annex IV Part B(4)',
		kind: power
	},
	{
		key: 'initialInternalResistance',
		section: 'performance',
		label: 'Initial internal resistance of the module',
		annex: 'Annex XIII §1(c), Annex IV Part A(5)',
		kind: {
			type: 'number',
			canonical: 'Ω',
			units: [
				{ unit: 'mΩ', factor: 0.001 },
				{ unit: 'Ω', factor: 1 }
			],
			min: 0
		}
	},
	{
		key: 'initialSelfDischarge',
		section: 'performance',
		label: 'Initial self-discharge',
		annex: 'Annex IV Part A(6)',
		kind: {
			type: 'number',
			canonical: '%/month',
			units: [{ unit: '%/month', factor: 1 }],
			min: 0,
			max: 100
		}
	},
	{
		key: 'roundtripEfficiency',
		section: 'performance',
		label: 'Initial round-trip energy efficiency',
		annex: 'Annex IV Part A(4)',
		kind: pct()
	},
	{
		key: 'roundTripEfficiencyAt50PctCycleLife',
		section: 'performance',
		label: 'Round-trip efficiency at 50 % of cycle life',
		annex: 'Annex IV Part A(4)',
		kind: pct()
	},
	{
		key: 'expectedLifetimeYears',
		section: 'performance',
		label: 'Expected lifetime in calendar years',
		annex: 'Annex XIII §1(c)',
		kind: {
			type: 'number',
			canonical: 'years',
			units: [{ unit: 'years', factor: 1 }],
			min: 0,
			max: 100
		}
	},
	{
		key: 'lifetimeReferenceTest',
		section: 'performance',
		label: 'Reference test of the cycle life (link)',
		annex: 'Annex XIII §1(c)',
		kind: { type: 'uri' },
		hint: 'A web address or URN of the test description, e.g. https://… or urn:…'
	},
	{
		key: 'cRateLifeCycleTest',
		section: 'performance',
		label: 'C-rate of the cycle-life test',
		annex: 'Annex XIII §1(c)',
		kind: { type: 'number', canonical: 'C', units: [{ unit: 'C', factor: 1 }], min: 0, max: 100 }
	},
	{
		key: 'temperatureRangeIdleState',
		section: 'performance',
		label: 'Temperature range the module withstands when idle',
		annex: 'Annex IV Part B(5)',
		kind: { type: 'range', unit: '°C' }
	},
	{
		key: 'chemistryShortName',
		section: 'materialComposition',
		label: 'Chemistry (short name)',
		annex: 'Annex VI Part A(7)',
		kind: { type: 'text' },
		hint: 'e.g. LTO'
	},
	{
		key: 'chemistryClearName',
		section: 'materialComposition',
		label: 'Chemistry (full name)',
		annex: 'Annex VI Part A(7)',
		kind: { type: 'text' }
	},
	{
		key: 'hazardousSubstances',
		section: 'materialComposition',
		label: 'Hazardous substances',
		annex: 'Annex VI Part A(8)',
		kind: {
			type: 'table',
			columns: [
				{ key: 'name', label: 'name', type: 'text' },
				{ key: 'cas', label: 'CAS number', type: 'cas' },
				{ key: 'hazardClass', label: 'hazard class', type: 'choice', options: HAZARD_CLASSES },
				{ key: 'concentrationPct', label: 'concentration %', type: 'number', min: 0, max: 100 },
				{ key: 'location', label: 'component', type: 'text' },
				{ key: 'impact', label: 'impact statement', type: 'text' }
			]
		}
	},
	{
		key: 'criticalRawMaterials',
		section: 'materialComposition',
		label: 'Critical raw materials (above 0.1 % w/w)',
		annex: 'Annex VI Part A(10)',
		kind: {
			type: 'table',
			columns: [
				{ key: 'name', label: 'material', type: 'text' },
				{ key: 'cas', label: 'CAS number', type: 'cas' },
				{ key: 'massG', label: 'mass g', type: 'number', min: 0 },
				{ key: 'location', label: 'component', type: 'text' }
			]
		}
	},
	{
		key: 'carbonFootprint',
		section: 'carbonFootprint',
		label: 'Carbon footprint per kWh over the service life',
		annex: 'Annex XIII §1(a), Art. 7',
		kind: perKwh
	},
	{
		key: 'carbonFootprintPerLifecycleStage',
		section: 'carbonFootprint',
		label: 'Carbon footprint per life-cycle stage',
		annex: 'Art. 7(1)',
		kind: {
			type: 'table',
			columns: [
				{ key: 'stage', label: 'stage', type: 'choice', options: LIFECYCLE_STAGES },
				{ key: 'value', label: 'kg CO2e/kWh', type: 'number', min: 0 }
			]
		}
	},
	{
		key: 'carbonFootprintPerformanceClass',
		section: 'carbonFootprint',
		label: 'Carbon footprint performance class',
		annex: 'Art. 7(2)',
		kind: { type: 'text' }
	},
	{
		key: 'carbonFootprintStudy',
		section: 'carbonFootprint',
		label: 'Public carbon footprint study (link)',
		annex: 'Art. 7(1)',
		kind: { type: 'uri' }
	},
	{
		key: 'recycledContent',
		section: 'circularity',
		label: 'Recycled content of the active materials',
		annex: 'Annex XIII §1(a), Art. 8',
		kind: {
			type: 'table',
			columns: [
				{ key: 'material', label: 'material', type: 'choice', options: RECYCLED_MATERIALS },
				{ key: 'preConsumerShare', label: 'pre-consumer %', type: 'number', min: 0, max: 100 },
				{ key: 'postConsumerShare', label: 'post-consumer %', type: 'number', min: 0, max: 100 }
			]
		}
	},
	{
		key: 'renewableContent',
		section: 'circularity',
		label: 'Renewable content',
		annex: 'Annex XIII §1(a)',
		kind: pct()
	},
	{
		key: 'wastePrevention',
		section: 'circularity',
		label: 'End of life: waste prevention and longer use (link)',
		annex: 'Annex XIII §1(a), Art. 60(1)(a)',
		kind: { type: 'uri' }
	},
	{
		key: 'separateCollection',
		section: 'circularity',
		label: 'End of life: separate collection (link)',
		annex: 'Art. 60(1)(b)',
		kind: { type: 'uri' }
	},
	{
		key: 'informationOnCollection',
		section: 'circularity',
		label: 'End of life: take-back and collection points (link)',
		annex: 'Art. 60(1)(c)',
		kind: { type: 'uri' }
	},
	{
		key: 'safetyInstructions',
		section: 'circularity',
		label: 'Safety instructions for handling (link)',
		annex: 'Annex XIII §2(d)',
		kind: { type: 'uri' }
	},
	{
		key: 'extinguishingAgent',
		section: 'circularity',
		label: 'Usable extinguishing agents',
		annex: 'Annex VI Part A(9)',
		kind: { type: 'table', columns: [{ key: 'agent', label: 'agent', type: 'text' }] }
	},
	{
		key: 'dismantlingManual',
		section: 'circularity',
		label: 'Dismantling manual (link)',
		annex: 'Annex XIII §2(c)',
		kind: { type: 'uri' },
		restricted: true
	}
];

export const PASSPORT_ITEM_BY_KEY = new Map(PASSPORT_ITEMS.map((i) => [i.key, i]));

/** A stored item value after parsing; numbers are as entered, in `unit`. */
export type ItemValue =
	| number
	| string
	| { streetAddress: string; postalCode: string; addressCountry: string }
	| { min: number; max: number }
	| Record<string, string | number>[];

export interface StoredItem {
	value: ItemValue;
	unit: string | null;
}

/** Raw form input of one item: `value` plus, by kind, `unit`, address parts or range ends. */
export interface ItemInput {
	value?: string;
	unit?: string;
	street?: string;
	postalCode?: string;
	country?: string;
	min?: string;
	max?: string;
}

export type ItemParse = { ok: true; item: StoredItem | null } | { ok: false; message: string };

const MAX_TEXT = 500;
const MAX_ROWS = 40;

/** A typed number by the register's one decimal rule (`./decimal`); blank or unreadable → null. */
function num(raw: string): number | null {
	const n = readDecimal(raw);
	return typeof n === 'number' ? n : null;
}

/** Http(s) URL or URN, as the data model's ResourcePath (xsd:anyURI) is used for links. */
export function isPassportUri(s: string): boolean {
	if (s.length > MAX_TEXT) return false;
	if (/^urn:[a-z0-9][a-z0-9-]{0,31}:\S+$/i.test(s)) return true;
	try {
		const u = new URL(s);
		return u.protocol === 'https:' || u.protocol === 'http:';
	} catch {
		return false;
	}
}

/**
 * Reads one item from the admin's form. Empty input means "not yet provided" (item null).
 * Messages say what to fix in words the admin can act on.
 */
export function parseItemInput(def: PassportItemDef, input: ItemInput): ItemParse {
	const k = def.kind;
	const v = (input.value ?? '').trim();
	if (k.type === 'address') {
		const parts = [input.street, input.postalCode, input.country].map((s) => (s ?? '').trim());
		if (parts.every((p) => p === '')) return { ok: true, item: null };
		if (parts.some((p) => p === '' || p.length > MAX_TEXT))
			return {
				ok: false,
				message: `${def.label}: fill in street, postal code and country (each up to ${MAX_TEXT} characters), or leave all three empty.`
			};
		return {
			ok: true,
			item: {
				value: { streetAddress: parts[0], postalCode: parts[1], addressCountry: parts[2] },
				unit: null
			}
		};
	}
	if (k.type === 'range') {
		const lo = (input.min ?? '').trim();
		const hi = (input.max ?? '').trim();
		if (lo === '' && hi === '') return { ok: true, item: null };
		const a = num(lo);
		const b = num(hi);
		if (a === null || b === null)
			return { ok: false, message: `${def.label}: give both ends as numbers in ${k.unit}.` };
		if (a > b)
			return {
				ok: false,
				message: `${def.label}: the lower end ${a} is above the upper end ${b}.`
			};
		return { ok: true, item: { value: { min: a, max: b }, unit: k.unit } };
	}
	if (v === '') return { ok: true, item: null };
	if (v.length > (k.type === 'table' ? MAX_TEXT * MAX_ROWS : MAX_TEXT))
		return { ok: false, message: `${def.label}: this is too long.` };
	switch (k.type) {
		case 'number': {
			const n = num(v);
			if (n === null)
				return { ok: false, message: `${def.label}: “${v.slice(0, 30)}” is not a number.` };
			const unit =
				k.units.find((u) => u.unit === input.unit) ?? (k.units.length === 1 ? k.units[0] : null);
			if (!unit)
				return {
					ok: false,
					message: `${def.label}: choose the unit (${k.units.map((u) => u.unit).join(' or ')}).`
				};
			const canonical = n * unit.factor;
			if ((k.min !== undefined && canonical < k.min) || (k.max !== undefined && canonical > k.max))
				return {
					ok: false,
					message: `${def.label}: ${n} ${unit.unit} is outside ${k.min ?? '−∞'} to ${k.max ?? '∞'} ${k.canonical}.`
				};
			return { ok: true, item: { value: n, unit: unit.unit } };
		}
		case 'text':
			return { ok: true, item: { value: v, unit: null } };
		case 'uri':
			return isPassportUri(v)
				? { ok: true, item: { value: v, unit: null } }
				: {
						ok: false,
						message: `${def.label}: “${v.slice(0, 60)}” is not a web address (https://…) or a URN (urn:…).`
					};
		case 'choice':
			return (k.options as readonly string[]).includes(v)
				? { ok: true, item: { value: v, unit: null } }
				: { ok: false, message: `${def.label}: choose one of ${k.options.join(', ')}.` };
		case 'table':
			return parseTable(def, k.columns, v);
	}
}

function parseTable(def: PassportItemDef, columns: TableColumn[], text: string): ItemParse {
	const lines = text
		.split('\n')
		.map((l) => l.trim())
		.filter((l) => l !== '');
	if (lines.length > MAX_ROWS)
		return { ok: false, message: `${def.label}: at most ${MAX_ROWS} lines, not ${lines.length}.` };
	const rows: Record<string, string | number>[] = [];
	for (const [i, line] of lines.entries()) {
		if (line.length > MAX_TEXT)
			return {
				ok: false,
				message: `${def.label}, line ${i + 1}: longer than ${MAX_TEXT} characters.`
			};
		const cells = columns.length === 1 ? [line] : line.split('|').map((c) => c.trim());
		if (cells.length !== columns.length)
			return {
				ok: false,
				message: `${def.label}, line ${i + 1}: expected ${columns.length} parts separated by “|” (${columns.map((c) => c.label).join(' | ')}), found ${cells.length}.`
			};
		const row: Record<string, string | number> = {};
		for (const [j, c] of columns.entries()) {
			const cell = cells[j];
			const where = `${def.label}, line ${i + 1}, ${c.label}`;
			if (cell === '') return { ok: false, message: `${where}: empty.` };
			if (c.type === 'number') {
				const n = num(cell);
				if (n === null)
					return { ok: false, message: `${where}: “${cell.slice(0, 30)}” is not a number.` };
				if ((c.min !== undefined && n < c.min) || (c.max !== undefined && n > c.max))
					return {
						ok: false,
						message: `${where}: ${n} is outside ${c.min ?? '−∞'} to ${c.max ?? '∞'}.`
					};
				row[c.key] = n;
			} else if (c.type === 'cas') {
				if (!CAS_PATTERN.test(cell))
					return {
						ok: false,
						message: `${where}: “${cell.slice(0, 30)}” is not a CAS number (like 7439-93-2).`
					};
				row[c.key] = cell;
			} else if (c.type === 'choice') {
				if (!c.options!.includes(cell))
					return { ok: false, message: `${where}: choose one of ${c.options!.join(', ')}.` };
				row[c.key] = cell;
			} else row[c.key] = cell;
		}
		rows.push(row);
	}
	return rows.length ? { ok: true, item: { value: rows, unit: null } } : { ok: true, item: null };
}

/** A stored number in the canonical unit the data model states for its attribute. */
export function canonicalNumber(def: PassportItemDef, item: StoredItem): number {
	if (def.kind.type !== 'number' || typeof item.value !== 'number')
		throw new TypeError(`${def.key} is not a number item.`);
	const unit = def.kind.units.find((u) => u.unit === item.unit) ?? def.kind.units[0];
	return roundTo(item.value * unit.factor, 9);
}

export function roundTo(x: number, digits: number): number {
	const f = 10 ** digits;
	return Math.round(x * f) / f;
}

/** The form's text for a stored item, so the admin sees what was entered. */
export function itemToInput(def: PassportItemDef, item: StoredItem | undefined): ItemInput {
	if (!item) return {};
	const v = item.value;
	if (
		def.kind.type === 'address' &&
		typeof v === 'object' &&
		!Array.isArray(v) &&
		'streetAddress' in v
	)
		return { street: v.streetAddress, postalCode: v.postalCode, country: v.addressCountry };
	if (def.kind.type === 'range' && typeof v === 'object' && !Array.isArray(v) && 'min' in v)
		return { min: String(v.min), max: String(v.max) };
	if (def.kind.type === 'table' && Array.isArray(v)) {
		const cols = def.kind.columns;
		return { value: v.map((r) => cols.map((c) => String(r[c.key])).join(' | ')).join('\n') };
	}
	return { value: String(v), unit: item.unit ?? undefined };
}
