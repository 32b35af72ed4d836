/**
 * A module's battery passport as JSON, in the structure of the Battery Pass consortium's
 * open data model v1.2.0 (the basis of DIN DKE SPEC 99100): sections
 * `generalProductInformation`, `performance` (`batteryTechicalProperties` and, for
 * parties with a legitimate interest, `batteryCondition`), and `materialComposition`,
 * `carbonFootprint`, `circularity` where the assembler has entered their data. Attribute
 * names and spellings are the model's own (e.g. `warrentyPeriod`, `batteryTechicalProperties`).
 *
 * Every attribute the model requires appears either with a value or in `itemStatus` with
 * the reason it is absent (not yet provided by the assembler, not recorded by the
 * register, not applicable yet, or withheld from this tier). Nothing is invented.
 *
 * Units follow the model (SAMM units in its v1.2.0 .ttl files); where the model's unit
 * cannot be right for the attribute, `units` says what we emit and why.
 */
import { deriveFigures, type ModelSpec } from './model';
import { BATTERY_PASS_STATUS, passportStatusOf, type PassportStatus } from './module-status';
import {
	PASSPORT_ITEM_BY_KEY,
	canonicalNumber,
	roundTo,
	type PassportSection,
	type StoredItem
} from './passport-items';

export type PassportTier = 'public' | 'restricted' | 'full';

export const TIER_LABELS: Record<PassportTier, string> = {
	public: 'Public',
	restricted: 'Legitimate interest (access link)',
	full: 'Dealer and assembler'
};

export type ItemStatusCode =
	'not_yet_provided' | 'not_recorded' | 'not_applicable_yet' | 'withheld' | 'see_supplementary';

export interface ItemStatus {
	/** JSON pointer of the attribute in this document. */
	path: string;
	status: ItemStatusCode;
	note: string;
}

export interface PassportModel extends ModelSpec {
	warrantyYears: number;
	ratedCycles: number;
	referenceTempC: number;
	endRetentionPct: number;
}

export interface CapacityEvidence {
	at: Date;
	capacityAh: number;
	temperatureC: number | null;
	source: string;
}
export interface ThroughputEvidence {
	at: Date;
	/** Discharge energy throughput of this module in Wh (a system's figure already shared out). */
	moduleWh: number | null;
	/** A cycle count reported instead (e.g. by the BMS), used only when no throughput is given. */
	cycles: number | null;
	source: string;
}
export interface TemperatureEvidence {
	at: Date;
	averageCellC: number | null;
	maximumCellC: number | null;
	source: string;
}
export interface NegativeEvent {
	at: Date;
	text: string;
}
export interface HistoryEvent {
	at: Date;
	kind: string;
	summary: string;
	by: string;
}

export interface PassportInput {
	tier: PassportTier;
	serial: string;
	links: { record: string; passport: string; json: string; digitalLink: string | null };
	issuer: { name: string };
	model: PassportModel;
	items: Record<string, StoredItem>;
	module: {
		builtAt: Date | null;
		commissionedAt: Date | null;
		state: string;
		lifecycleStatus?: PassportStatus | null;
	};
	/** Condition evidence; only read for the restricted and full tiers. */
	evidence?: {
		capacity: CapacityEvidence[];
		throughput: ThroughputEvidence[];
		temperatures: TemperatureEvidence[];
		negativeEvents: NegativeEvent[];
	};
	/** The module's timeline; only read for the full tier. */
	history?: HistoryEvent[];
	now: Date;
}

type Obj = Record<string, unknown>;

export const DATA_MODEL = {
	name: 'Battery Pass data model',
	version: '1.2.0',
	basis: 'DIN DKE SPEC 99100'
} as const;

/** Lowercase letters and digits only, as the model's URN constraint ^urn:[a-z0-9]+:[a-z0-9]+$ asks. */
const urnPart = (s: string) => s.toLowerCase().replace(/[^a-z0-9]/g, '');

/**
 * The passport identifier: `urn:{issuer}:{serial}` with both parts reduced to lowercase
 * letters and digits. Our serials have a fixed shape (letters, digits, hyphens at fixed
 * places), so dropping the hyphens keeps them unique.
 */
export function passportUrn(issuerName: string, serial: string): string {
	return `urn:${urnPart(issuerName).slice(0, 32) || 'register'}:${urnPart(serial)}`;
}

/** ISO 8601 date-time in UTC without milliseconds, as the model's dateTime pattern allows. */
const iso = (d: Date) => d.toISOString().replace(/\.\d{3}Z$/, 'Z');

/** Capacity-based state of health: measured ÷ rated (Art. 3(1)(28); e.g. 252 of 280 Ah = 90.0 %). */
export function stateOfHealthPct(measuredAh: number, ratedAh: number): number {
	if (!(ratedAh > 0)) throw new RangeError('Rated capacity must be positive.');
	if (!(measuredAh >= 0)) throw new RangeError('Measured capacity must not be negative.');
	return (measuredAh / ratedAh) * 100;
}

const latest = <T extends { at: Date }>(xs: T[]) =>
	xs.reduce<T | null>((a, b) => (a === null || b.at.getTime() >= a.at.getTime() ? b : a), null);

export function buildPassport(input: PassportInput) {
	const status: ItemStatus[] = [];
	const units: Record<string, string> = {};
	const item = (key: string) => input.items[key];
	const def = (key: string) => PASSPORT_ITEM_BY_KEY.get(key)!;
	const missing = (path: string, code: ItemStatusCode, note: string) =>
		status.push({ path, status: code, note });
	const notProvided = (path: string, what: string) =>
		missing(path, 'not_yet_provided', `${what}: not yet provided by the manufacturer.`);
	const numberItem = (key: string) => {
		const it = item(key);
		return it ? canonicalNumber(def(key), it) : null;
	};

	const m = input.model;
	const f = deriveFigures(m);
	const restrictedTier = input.tier !== 'public';

	// --- General product information ---
	const gpi: Obj = {};
	const gp = '/generalProductInformation';
	gpi.productIdentifier = input.serial;
	gpi.batteryPassportIdentifier = passportUrn(input.issuer.name, input.serial);
	const category = item('batteryCategory');
	if (category) gpi.batteryCategory = category.value;
	else notProvided(`${gp}/batteryCategory`, 'Battery category');
	const address = item('manufacturerAddress');
	const operatorId = item('manufacturerIdentifier');
	if (address && operatorId) {
		const contact = {
			contactName: input.issuer.name,
			postalAddress: address.value,
			identifier: operatorId.value
		};
		gpi.manufacturerInformation = contact;
		// The assembler places the modules on the market itself, so it is also the operator.
		gpi.operatorInformation = contact;
	} else {
		const lacking = [!address && 'postal address', !operatorId && 'operator identifier']
			.filter(Boolean)
			.join(' and ');
		notProvided(`${gp}/manufacturerInformation`, `Manufacturer's ${lacking}`);
		notProvided(`${gp}/operatorInformation`, `Economic operator's ${lacking}`);
	}
	if (input.module.builtAt) gpi.manufacturingDate = iso(input.module.builtAt);
	else
		missing(`${gp}/manufacturingDate`, 'not_applicable_yet', 'The module has not been built yet.');
	gpi.batteryStatus = BATTERY_PASS_STATUS[passportStatusOf(input.module)];
	gpi.batteryMass = m.massKg;
	units[`${gp}/batteryMass`] = 'kg';
	const place = item('manufacturingPlace');
	if (place) gpi.manufacturingPlace = place.value;
	else notProvided(`${gp}/manufacturingPlace`, 'Manufacturing place');
	if (input.module.commissionedAt) gpi.puttingIntoService = iso(input.module.commissionedAt);
	else
		missing(
			`${gp}/puttingIntoService`,
			'not_applicable_yet',
			'Not put into service yet: the date is set when the system is commissioned.'
		);
	// The model types this as xsd:gMonth (--MM), which cannot hold a period beyond 12 months;
	// we give the period as an ISO 8601 duration in months, the unit the model names.
	gpi.warrentyPeriod = `P${m.warrantyYears * 12}M`;
	units[`${gp}/warrentyPeriod`] =
		'ISO 8601 duration in months (the model names the unit month; its xsd:gMonth type cannot hold more than 12)';

	// --- Performance and durability: technical properties (Annex XIII §1) ---
	const btp: Obj = {};
	const bp = '/performance/batteryTechicalProperties';
	const p80 = numberItem('powerAt80SoC');
	const p20 = numberItem('powerAt20SoC');
	if (p80 !== null && p20 !== null) {
		btp.originalPowerCapability = [
			{ atSoC: 80, powerCapabilityAt: p80 },
			{ atSoC: 20, powerCapabilityAt: p20 }
		];
		units[`${bp}/originalPowerCapability`] =
			'atSoC in %, powerCapabilityAt in kW (the model lists percent for both; a power in percent cannot be meant)';
	} else
		notProvided(
			`${bp}/originalPowerCapability`,
			'Power capability at 80 % and 20 % state of charge'
		);
	const continuousW = f.maxContinuousA * f.nominalV;
	btp.ratedMaximumPower = roundTo((f.burstA * f.nominalV) / 1000, 3);
	units[`${bp}/ratedMaximumPower`] = `kW (the ${m.burstSeconds} s burst rating)`;
	btp.powerCapabilityRatio = roundTo((continuousW / m.usableWh) * 100, 1);
	units[`${bp}/powerCapabilityRatio`] =
		'% (continuous power in W ÷ usable energy in Wh × 100, the model’s unit being percent)';
	btp.ratedEnergy = roundTo(m.usableWh / 1000, 3);
	units[`${bp}/ratedEnergy`] = 'kWh (usable energy)';
	btp.expectedNumberOfCycles = m.ratedCycles;
	units[`${bp}/expectedNumberOfCycles`] = `equivalent full cycles at ${m.referenceTempC} °C`;
	for (const [key, attr, unit] of [
		['initialSelfDischarge', 'initialSelfDischarge', '%/month'],
		['roundtripEfficiency', 'roundtripEfficiency', '%'],
		['expectedLifetimeYears', 'expectedLifetime', 'years'],
		['cRateLifeCycleTest', 'cRateLifeCycleTest', 'C'],
		['roundTripEfficiencyAt50PctCycleLife', null, '%']
	] as const) {
		if (!attr) continue;
		const v = numberItem(key);
		if (v !== null) {
			btp[attr] = v;
			units[`${bp}/${attr}`] = unit;
		} else notProvided(`${bp}/${attr}`, def(key).label);
	}
	btp.ratedCapacity = m.ratedAh;
	units[`${bp}/ratedCapacity`] = 'Ah';
	const r = numberItem('initialInternalResistance');
	if (r !== null) {
		btp.initialInternalResistance = [{ ohmicResistance: r, batteryComponent: 'module' }];
		units[`${bp}/initialInternalResistance`] = 'Ω';
	} else notProvided(`${bp}/initialInternalResistance`, 'Initial internal resistance');
	btp.cRate = m.maxContinuousC;
	units[`${bp}/cRate`] = 'C (maximum continuous)';
	btp.nominalVoltage = f.nominalV;
	btp.minimumVoltage = f.minV;
	btp.maximumVoltage = f.maxV;
	btp.capacityThresholdForExhaustion = m.endRetentionPct;
	units[`${bp}/capacityThresholdForExhaustion`] =
		'% of rated capacity at the end of the rated cycle life';
	const refTest = item('lifetimeReferenceTest');
	if (refTest) btp.lifetimeReferenceTest = refTest.value;
	else notProvided(`${bp}/lifetimeReferenceTest`, 'Reference test of the cycle life');
	const idle = item('temperatureRangeIdleState');
	if (idle)
		missing(
			`${bp}/temperatureRangeIdleState`,
			'see_supplementary',
			'The model holds one number here; the range (lower and upper end) is under supplementary.temperatureRangesC.idle.'
		);
	else notProvided(`${bp}/temperatureRangeIdleState`, 'Idle-state temperature range');

	const performance: Obj = { batteryTechicalProperties: btp };
	const supplementary: Obj = {
		temperatureRangesC: {
			charge: { min: m.chargeTempMinC, max: m.chargeTempMaxC },
			discharge: { min: m.dischargeTempMinC, max: m.dischargeTempMaxC },
			...(idle ? { idle: idle.value } : {})
		},
		voltageNote: `Minimum, nominal and maximum voltage apply across the charge and discharge temperature ranges.`
	};
	const rte50 = numberItem('roundTripEfficiencyAt50PctCycleLife');

	// --- Performance and durability: condition (Annex XIII §4, legitimate interest only) ---
	const cp = '/performance/batteryCondition';
	if (!restrictedTier) {
		missing(
			cp,
			'withheld',
			'The battery condition is shown to the module’s dealer, the assembler and holders of an access link (Annex XIII §4).'
		);
	} else {
		const cond: Obj = {};
		const ev = input.evidence ?? {
			capacity: [],
			throughput: [],
			temperatures: [],
			negativeEvents: []
		};
		const cap = latest(ev.capacity);
		const conditionSupp: Obj = {};
		if (cap) {
			const soh = stateOfHealthPct(cap.capacityAh, m.ratedAh);
			cond.remainingCapacity = { remainingCapacityValue: cap.capacityAh, lastUpdate: iso(cap.at) };
			units[`${cp}/remainingCapacity`] =
				'Ah (the model lists kWh, but defines it after rated capacity, which is in Ah)';
			cond.capacityFade = { capacityFadeValue: roundTo(100 - soh, 2), lastUpdate: iso(cap.at) };
			units[`${cp}/capacityFade`] = '% of rated capacity';
			conditionSupp.stateOfHealth = {
				valuePct: roundTo(soh, 2),
				basis: 'measured capacity ÷ rated capacity',
				measuredAh: cap.capacityAh,
				ratedAh: m.ratedAh,
				measuredAt: iso(cap.at),
				measuredAtC: cap.temperatureC,
				source: cap.source
			};
		} else {
			for (const a of ['remainingCapacity', 'capacityFade'])
				missing(`${cp}/${a}`, 'not_applicable_yet', 'No capacity has been measured yet.');
		}
		const tp = latest(ev.throughput);
		if (tp && tp.moduleWh !== null) {
			const efc = tp.moduleWh / m.usableWh;
			cond.energyThroughput = roundTo(tp.moduleWh / 1000, 3);
			units[`${cp}/energyThroughput`] = 'kWh';
			cond.numberOfFullCycles = {
				numberOfFullCyclesValue: Math.round(efc),
				lastUpdate: iso(tp.at)
			};
			units[`${cp}/numberOfFullCycles`] =
				'equivalent full cycles, energy basis, rounded to whole cycles';
			conditionSupp.equivalentFullCycles = {
				value: roundTo(efc, 2),
				basis: `energy basis: discharge throughput ÷ usable energy (${m.usableWh} Wh)`,
				throughputWh: tp.moduleWh,
				at: iso(tp.at),
				source: tp.source
			};
		} else if (tp && tp.cycles !== null) {
			cond.numberOfFullCycles = {
				numberOfFullCyclesValue: Math.round(tp.cycles),
				lastUpdate: iso(tp.at)
			};
			units[`${cp}/numberOfFullCycles`] = 'cycles as counted by the battery management system';
			conditionSupp.equivalentFullCycles = {
				value: tp.cycles,
				basis: 'cycle count reported with the claim (no energy throughput was given)',
				throughputWh: null,
				at: iso(tp.at),
				source: tp.source
			};
			missing(
				`${cp}/energyThroughput`,
				'not_recorded',
				'Only a cycle count was reported, not the energy throughput.'
			);
		} else {
			for (const a of ['energyThroughput', 'numberOfFullCycles'])
				missing(`${cp}/${a}`, 'not_applicable_yet', 'No energy throughput has been reported yet.');
		}
		cond.negativeEvents = ev.negativeEvents
			.slice()
			.sort((a, b) => a.at.getTime() - b.at.getTime())
			.map((e) => ({ negativeEvent: e.text, lastUpdate: iso(e.at) }));
		const temps = ev.temperatures.slice().sort((a, b) => a.at.getTime() - b.at.getTime());
		missing(
			`${cp}/temperatureInformation`,
			'see_supplementary',
			'The register holds temperatures reported with claims, not cumulated time above or below the limits; they are under supplementary.condition.operatingTemperatures.'
		);
		conditionSupp.operatingTemperatures = temps.map((t) => ({
			at: iso(t.at),
			averageCellC: t.averageCellC,
			maximumCellC: t.maximumCellC,
			source: t.source
		}));
		for (const a of [
			'capacityThroughput',
			'stateOfCertifiedEnergy',
			'remainingEnergy',
			'remainingPowerCapability',
			'powerFade',
			'roundTripEfficiencyFade',
			'evolutionOfSelfDischarge',
			'currentSelfDischargingRate',
			'internalResistanceIncrease',
			'remainingRoundTripEnergyEfficiency',
			'stateOfCharge'
		])
			missing(`${cp}/${a}`, 'not_recorded', 'The register does not record this for a module.');
		if (rte50 !== null) {
			cond.roundTripEfficiencyat50PerCentCycleLife = rte50;
			units[`${cp}/roundTripEfficiencyat50PerCentCycleLife`] = '%';
		} else
			notProvided(
				`${cp}/roundTripEfficiencyat50PerCentCycleLife`,
				'Round-trip efficiency at 50 % of cycle life'
			);
		performance.batteryCondition = cond;
		supplementary.condition = conditionSupp;
	}

	// --- Material composition ---
	const materialComposition = section(
		'materialComposition',
		['batteryChemistry', 'batteryMaterials', 'hazardousSubstances'],
		(put) => {
			const sn = item('chemistryShortName');
			const cn = item('chemistryClearName');
			if (sn && cn) put('batteryChemistry', { shortName: sn.value, clearName: cn.value }, '');
			else put('batteryChemistry', null, 'Chemistry (short and full name)');
			const crm = item('criticalRawMaterials');
			put(
				'batteryMaterials',
				crm && Array.isArray(crm.value)
					? crm.value.map((row) => ({
							batteryMaterialLocation: { componentName: row.location },
							batteryMaterialIdentifier: row.cas,
							batteryMaterialName: row.name,
							batteryMaterialMass: row.massG,
							isCriticalRawMaterial: true
						}))
					: null,
				'Critical raw materials'
			);
			if (crm) units['/materialComposition/batteryMaterials'] = 'batteryMaterialMass in g';
			const hz = item('hazardousSubstances');
			put(
				'hazardousSubstances',
				hz && Array.isArray(hz.value)
					? hz.value.map((row) => ({
							hazardousSubstanceClass: row.hazardClass,
							hazardousSubstanceName: row.name,
							hazardousSubstanceConcentration: row.concentrationPct,
							hazardousSubstanceImpact: [row.impact],
							hazardousSubstanceLocation: { componentName: row.location },
							hazardousSubstanceIdentifier: row.cas
						}))
					: null,
				'Hazardous substances'
			);
			if (hz)
				units['/materialComposition/hazardousSubstances'] = 'hazardousSubstanceConcentration in %';
		}
	);

	// --- Carbon footprint ---
	const carbonFootprint = section(
		'carbonFootprint',
		[
			'batteryCarbonFootprint',
			'carbonFootprintPerLifecycleStage',
			'carbonFootprintPerformanceClass',
			'carbonFootprintStudy'
		],
		(put) => {
			const cf = numberItem('carbonFootprint');
			put('batteryCarbonFootprint', cf, 'Carbon footprint per kWh');
			if (cf !== null) units['/carbonFootprint/batteryCarbonFootprint'] = 'kg CO2e/kWh';
			const stages = item('carbonFootprintPerLifecycleStage');
			put(
				'carbonFootprintPerLifecycleStage',
				stages && Array.isArray(stages.value)
					? stages.value.map((s) => ({ lifecycleStage: s.stage, carbonFootprint: s.value }))
					: null,
				'Carbon footprint per life-cycle stage'
			);
			put(
				'carbonFootprintPerformanceClass',
				item('carbonFootprintPerformanceClass')?.value ?? null,
				'Carbon footprint performance class'
			);
			put(
				'carbonFootprintStudy',
				item('carbonFootprintStudy')?.value ?? null,
				'Carbon footprint study'
			);
		}
	);

	// --- Circularity ---
	const circularity = section(
		'circularity',
		[
			'dismantlingAndRemovalInformation',
			'sparePartSources',
			'recycledContent',
			'safetyMeasures',
			'endOfLifeInformation',
			'renewableContent'
		],
		(put) => {
			const manual = item('dismantlingManual');
			if (manual && !restrictedTier) put('dismantlingAndRemovalInformation', null, 'withheld');
			else
				put(
					'dismantlingAndRemovalInformation',
					manual
						? [
								{
									documentType: 'DismantlingManual',
									mimeType: 'application/pdf',
									documentURL: manual.value
								}
							]
						: null,
					'Dismantling manual'
				);
			put('sparePartSources', null, 'Sources for spare parts');
			const rc = item('recycledContent');
			put(
				'recycledContent',
				rc && Array.isArray(rc.value)
					? rc.value.map((x) => ({
							preConsumerShare: x.preConsumerShare,
							recycledMaterial: x.material,
							postConsumerShare: x.postConsumerShare
						}))
					: null,
				'Recycled content'
			);
			if (rc) units['/circularity/recycledContent'] = 'shares in %';
			const si = item('safetyInstructions');
			const ex = item('extinguishingAgent');
			put(
				'safetyMeasures',
				si && ex && Array.isArray(ex.value)
					? { safetyInstructions: si.value, extinguishingAgent: ex.value.map((a) => a.agent) }
					: null,
				'Safety instructions and extinguishing agents'
			);
			const [wp, sc, ic] = ['wastePrevention', 'separateCollection', 'informationOnCollection'].map(
				(k) => item(k)?.value ?? null
			);
			put(
				'endOfLifeInformation',
				wp && sc && ic
					? { wastePrevention: wp, separateCollection: sc, informationOnCollection: ic }
					: null,
				'End-of-life information (waste prevention, separate collection, collection points)'
			);
			const ren = numberItem('renewableContent');
			put('renewableContent', ren, 'Renewable content');
			if (ren !== null) units['/circularity/renewableContent'] = '%';
		}
	);

	/**
	 * Builds one optional category: present when at least one of its attributes has data,
	 * otherwise absent with one status entry for the whole category.
	 */
	function section(
		name: PassportSection,
		attrs: string[],
		fill: (put: (attr: string, value: unknown, what: string) => void) => void
	): Obj | null {
		const out: Obj = {};
		const pending: ItemStatus[] = [];
		fill((attr, value, what) => {
			if (value !== null && value !== undefined) out[attr] = value;
			else if (what === 'withheld')
				pending.push({
					path: `/${name}/${attr}`,
					status: 'withheld',
					note: 'Shown to holders of an access link, the module’s dealer and the assembler (Annex XIII §2).'
				});
			else
				pending.push({
					path: `/${name}/${attr}`,
					status: 'not_yet_provided',
					note: `${what}: not yet provided by the manufacturer.`
				});
		});
		if (Object.keys(out).length === 0) {
			status.push({
				path: `/${name}`,
				status: 'not_yet_provided',
				note: `None of ${attrs.join(', ')} has been provided by the manufacturer yet.`
			});
			return null;
		}
		status.push(...pending);
		return out;
	}

	if (input.tier === 'full') {
		supplementary.history = (input.history ?? [])
			.slice()
			.sort((a, b) => a.at.getTime() - b.at.getTime())
			.map((h) => ({ at: iso(h.at), kind: h.kind, summary: h.summary, by: h.by }));
	}

	return {
		passportFormat: {
			dataModel: DATA_MODEL.name,
			version: DATA_MODEL.version,
			basis: DATA_MODEL.basis
		},
		identifier: input.serial,
		tier: input.tier,
		issuedAt: iso(input.now),
		links: input.links,
		generalProductInformation: gpi,
		performance,
		...(materialComposition ? { materialComposition } : {}),
		...(carbonFootprint ? { carbonFootprint } : {}),
		...(circularity ? { circularity } : {}),
		supplementary,
		itemStatus: status,
		units
	};
}

export type Passport = ReturnType<typeof buildPassport>;
