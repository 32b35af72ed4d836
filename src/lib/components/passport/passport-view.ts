/**
 * Turns a passport document into the sections a person reads on the passport page: each
 * row a label and either a value or the reason it is absent ("not yet provided" …).
 */
import type { Passport, ItemStatus } from '$lib/domain/passport';
import { NEUTRAL } from '$lib/domain/format';

export interface ViewRow {
	label: string;
	value: string | null;
	/** Why there is no value, when there is none. */
	absent?: string;
}
export interface ViewSection {
	id: string;
	title: string;
	rows: ViewRow[];
	list?: { title: string; items: string[] };
}

const STATUS_WORDS: Record<ItemStatus['status'], string> = {
	not_yet_provided: 'Not yet provided',
	not_recorded: 'Not recorded',
	not_applicable_yet: 'Not yet applicable',
	withheld: 'Shown to parties with a legitimate interest',
	see_supplementary: 'See below'
};

type Obj = Record<string, unknown>;
const fmt = (n: unknown, unit = '') =>
	typeof n === 'number' ? `${NEUTRAL.number(n, 4)}${unit ? ` ${unit}` : ''}` : null;
const addr = (a: unknown) => {
	const x = a as Obj | undefined;
	return x ? `${x.streetAddress}, ${x.postalCode}, ${x.addressCountry}` : null;
};
const date = (s: unknown) => (typeof s === 'string' ? s.slice(0, 10) : null);

export function passportView(p: Passport): ViewSection[] {
	const status = new Map(p.itemStatus.map((s) => [s.path, s]));
	const row = (label: string, path: string, value: string | null): ViewRow => {
		if (value !== null) return { label, value };
		const s = status.get(path) ?? [...status.values()].find((x) => path.startsWith(x.path + '/'));
		return { label, value: null, absent: s ? STATUS_WORDS[s.status] : 'Not available' };
	};
	const g = p.generalProductInformation as Obj;
	const perf = p.performance as Obj;
	const t = perf.batteryTechicalProperties as Obj;
	const gp = '/generalProductInformation';
	const bp = '/performance/batteryTechicalProperties';
	const supp = p.supplementary as Obj;
	const ranges = supp.temperatureRangesC as Record<string, { min: number; max: number }>;
	const range = (r?: { min: number; max: number }) => (r ? `${r.min} to ${r.max} °C` : null);
	const power = t.originalPowerCapability as
		{ atSoC: number; powerCapabilityAt: number }[] | undefined;
	const ir = t.initialInternalResistance as { ohmicResistance: number }[] | undefined;
	const man = g.manufacturerInformation as Obj | undefined;

	const sections: ViewSection[] = [
		{
			id: 'identity',
			title: 'Identity',
			rows: [
				row(
					'Passport identifier',
					`${gp}/batteryPassportIdentifier`,
					String(g.batteryPassportIdentifier)
				),
				row('Battery category', `${gp}/batteryCategory`, (g.batteryCategory as string) ?? null),
				row('Status', `${gp}/batteryStatus`, String(g.batteryStatus)),
				row(
					'Manufacturer',
					`${gp}/manufacturerInformation`,
					man ? `${man.contactName}, ${addr(man.postalAddress)}` : null
				),
				row(
					'Operator identifier',
					`${gp}/manufacturerInformation`,
					man ? String(man.identifier) : null
				),
				row('Manufacturing place', `${gp}/manufacturingPlace`, addr(g.manufacturingPlace)),
				row('Manufactured', `${gp}/manufacturingDate`, date(g.manufacturingDate)),
				row('Put into service', `${gp}/puttingIntoService`, date(g.puttingIntoService)),
				row('Mass', `${gp}/batteryMass`, fmt(g.batteryMass, 'kg')),
				row(
					'Commercial warranty',
					`${gp}/warrentyPeriod`,
					typeof g.warrentyPeriod === 'string'
						? `${Number(g.warrentyPeriod.slice(1, -1)) / 12} years (${g.warrentyPeriod})`
						: null
				)
			]
		},
		{
			id: 'performance',
			title: 'Performance and durability',
			rows: [
				row('Rated capacity', `${bp}/ratedCapacity`, fmt(t.ratedCapacity, 'Ah')),
				row('Usable energy', `${bp}/ratedEnergy`, fmt(t.ratedEnergy, 'kWh')),
				row(
					'Voltage min / nominal / max',
					`${bp}/nominalVoltage`,
					`${fmt(t.minimumVoltage)} / ${fmt(t.nominalVoltage)} / ${fmt(t.maximumVoltage)} V`
				),
				row('Charge temperature', `${bp}`, range(ranges.charge)),
				row('Discharge temperature', `${bp}`, range(ranges.discharge)),
				row('Idle temperature', `${bp}/temperatureRangeIdleState`, range(ranges.idle)),
				row(
					'Original power at 80 % / 20 % charge',
					`${bp}/originalPowerCapability`,
					power ? power.map((x) => fmt(x.powerCapabilityAt, 'kW')).join(' / ') : null
				),
				row('Maximum power (burst)', `${bp}/ratedMaximumPower`, fmt(t.ratedMaximumPower, 'kW')),
				row(
					'Internal resistance',
					`${bp}/initialInternalResistance`,
					ir ? fmt(ir[0].ohmicResistance * 1000, 'mΩ') : null
				),
				row(
					'Expected cycle life',
					`${bp}/expectedNumberOfCycles`,
					fmt(t.expectedNumberOfCycles, 'equivalent full cycles')
				),
				row('Cycle-life test C-rate', `${bp}/cRateLifeCycleTest`, fmt(t.cRateLifeCycleTest, 'C')),
				row(
					'Cycle-life reference test',
					`${bp}/lifetimeReferenceTest`,
					(t.lifetimeReferenceTest as string) ?? null
				),
				row(
					'End-of-life capacity threshold',
					`${bp}/capacityThresholdForExhaustion`,
					fmt(t.capacityThresholdForExhaustion, '%')
				),
				row('Expected lifetime', `${bp}/expectedLifetime`, fmt(t.expectedLifetime, 'years')),
				row('Round-trip efficiency', `${bp}/roundtripEfficiency`, fmt(t.roundtripEfficiency, '%')),
				row('Self-discharge', `${bp}/initialSelfDischarge`, fmt(t.initialSelfDischarge, '%/month'))
			]
		}
	];

	const mc = (p as Obj).materialComposition as Obj | undefined;
	const circ = (p as Obj).circularity as Obj | undefined;
	const chem = mc?.batteryChemistry as Obj | undefined;
	const hz = (mc?.hazardousSubstances as Obj[] | undefined) ?? null;
	const crm = (mc?.batteryMaterials as Obj[] | undefined) ?? null;
	const safety = circ?.safetyMeasures as Obj | undefined;
	sections.push({
		id: 'safety',
		title: 'Materials and safety',
		rows: [
			row(
				'Chemistry',
				'/materialComposition/batteryChemistry',
				chem ? `${chem.shortName} (${chem.clearName})` : null
			),
			row(
				'Hazardous substances',
				'/materialComposition/hazardousSubstances',
				hz
					? hz
							.map(
								(h) =>
									`${h.hazardousSubstanceName} (CAS ${h.hazardousSubstanceIdentifier}, ${h.hazardousSubstanceConcentration} %, ${(h.hazardousSubstanceLocation as Obj).componentName})`
							)
							.join('; ')
					: null
			),
			row(
				'Critical raw materials',
				'/materialComposition/batteryMaterials',
				crm
					? crm
							.map(
								(c) =>
									`${c.batteryMaterialName} (${c.batteryMaterialMass} g, ${(c.batteryMaterialLocation as Obj).componentName})`
							)
							.join('; ')
					: null
			),
			row(
				'Extinguishing agents',
				'/circularity/safetyMeasures',
				safety ? (safety.extinguishingAgent as string[]).join(', ') : null
			),
			row(
				'Safety instructions',
				'/circularity/safetyMeasures',
				safety ? String(safety.safetyInstructions) : null
			)
		]
	});

	const cf = (p as Obj).carbonFootprint as Obj | undefined;
	sections.push({
		id: 'carbon',
		title: 'Carbon footprint',
		rows: [
			row(
				'Per kWh over the service life',
				'/carbonFootprint/batteryCarbonFootprint',
				fmt(cf?.batteryCarbonFootprint, 'kg CO₂e/kWh')
			),
			row(
				'By life-cycle stage',
				'/carbonFootprint/carbonFootprintPerLifecycleStage',
				cf?.carbonFootprintPerLifecycleStage
					? (cf.carbonFootprintPerLifecycleStage as Obj[])
							.map((s) => `${s.lifecycleStage} ${s.carbonFootprint}`)
							.join(', ')
					: null
			),
			row(
				'Performance class',
				'/carbonFootprint/carbonFootprintPerformanceClass',
				(cf?.carbonFootprintPerformanceClass as string) ?? null
			),
			row(
				'Study',
				'/carbonFootprint/carbonFootprintStudy',
				(cf?.carbonFootprintStudy as string) ?? null
			)
		]
	});
	const eol = circ?.endOfLifeInformation as Obj | undefined;
	sections.push({
		id: 'circularity',
		title: 'Recycled content and end of life',
		rows: [
			row(
				'Recycled content',
				'/circularity/recycledContent',
				circ?.recycledContent
					? (circ.recycledContent as Obj[])
							.map(
								(r) =>
									`${r.recycledMaterial}: ${r.preConsumerShare} % pre-, ${r.postConsumerShare} % post-consumer`
							)
							.join('; ')
					: null
			),
			row('Renewable content', '/circularity/renewableContent', fmt(circ?.renewableContent, '%')),
			row(
				'Waste prevention',
				'/circularity/endOfLifeInformation',
				(eol?.wastePrevention as string) ?? null
			),
			row(
				'Separate collection',
				'/circularity/endOfLifeInformation',
				(eol?.separateCollection as string) ?? null
			),
			row(
				'Take-back and collection points',
				'/circularity/endOfLifeInformation',
				(eol?.informationOnCollection as string) ?? null
			),
			row(
				'Dismantling manual',
				'/circularity/dismantlingAndRemovalInformation',
				circ?.dismantlingAndRemovalInformation
					? String((circ.dismantlingAndRemovalInformation as Obj[])[0].documentURL)
					: null
			),
			row('Spare-part sources', '/circularity/sparePartSources', null)
		]
	});

	const cond = perf.batteryCondition as Obj | undefined;
	const cs = supp.condition as Obj | undefined;
	if (cond && cs) {
		const soh = cs.stateOfHealth as Obj | undefined;
		const efc = cs.equivalentFullCycles as Obj | undefined;
		const temps = (cs.operatingTemperatures as Obj[]) ?? [];
		const cp = '/performance/batteryCondition';
		sections.push({
			id: 'condition',
			title: 'Condition',
			rows: [
				row(
					'State of health',
					`${cp}/remainingCapacity`,
					soh
						? `${fmt(soh.valuePct, '%')} (${soh.measuredAh} of ${soh.ratedAh} Ah, ${date(soh.measuredAt)}, ${soh.source})`
						: null
				),
				row(
					'Capacity fade',
					`${cp}/capacityFade`,
					fmt((cond.capacityFade as Obj | undefined)?.capacityFadeValue, '%')
				),
				row(
					'Equivalent full cycles',
					`${cp}/numberOfFullCycles`,
					efc ? `${fmt(efc.value)} (${efc.basis}; ${efc.source})` : null
				),
				row('Energy throughput', `${cp}/energyThroughput`, fmt(cond.energyThroughput, 'kWh')),
				row(
					'Operating temperatures',
					`${cp}/temperatureInformation`,
					temps.length
						? temps
								.map(
									(x) =>
										`${date(x.at)}: average ${x.averageCellC ?? '—'} °C, maximum ${x.maximumCellC ?? '—'} °C`
								)
								.join('; ')
						: null
				)
			],
			list: {
				title: 'Negative events',
				items: (cond.negativeEvents as Obj[]).map(
					(e) => `${date(e.lastUpdate)} — ${e.negativeEvent}`
				)
			}
		});
	}
	const history = supp.history as Obj[] | undefined;
	if (history)
		sections.push({
			id: 'history',
			title: 'History',
			rows: [],
			list: {
				title: 'Timeline',
				items: history.map((h) => `${date(h.at)} — ${h.summary} (${h.by})`)
			}
		});
	const order = [
		'identity',
		'condition',
		'performance',
		'safety',
		'carbon',
		'circularity',
		'history'
	];
	return sections.sort((a, b) => order.indexOf(a.id) - order.indexOf(b.id));
}

/** Items the manufacturer has not provided yet, for the page's closing list. */
export function notYetProvided(p: Passport): ItemStatus[] {
	return p.itemStatus.filter((s) => s.status === 'not_yet_provided');
}
