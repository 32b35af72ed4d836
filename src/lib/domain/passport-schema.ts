/**
 * Our own JSON schemas (draft-04) for the passport sections we emit, written from the
 * attribute names, types, enumerations and required lists of the Battery Pass data model
 * v1.2.0 as read in repository batterypass/BatteryPassDataModel, folder BatteryPass/:
 *   - io.BatteryPass.GeneralProductInformation/1.2.0/GeneralProductInformation.ttl and
 *     gen/GeneralProductInformation_openapi3_0.yaml (the generated schema of the same aspect);
 *   - io.BatteryPass.Performance/1.2.0/PerformanceAndDurability.ttl and
 *     gen/PerformanceAndDurability_openapi3_0.json;
 *   - io.BatteryPass.MaterialComposition/1.2.0/MaterialComposition.ttl;
 *   - io.BatteryPass.CarbonFootprint/1.2.0/CarbonFootprintForBatteries.ttl;
 *   - io.BatteryPass.Circularity/1.2.0/Circularity.ttl.
 * The model's files are licensed CC BY-NC 4.0 and are not copied here; this file states the
 * same facts (names, types, enumerations, required attributes) in our own words.
 *
 * Deliberate differences, each also stated in the passport's `units`:
 *   - `warrentyPeriod`: the model's pattern is xsd:gMonth (--MM), which cannot hold a
 *     period longer than 12 months; we require an ISO 8601 duration in months (P180M).
 *   - our date-time patterns are anchored (the generated ones are not), so they are stricter.
 *   - links (`format: uri` in the model) are checked by a pattern for http(s) or urn.
 *
 * `required` lists are the model's. An attribute a passport lists in its `itemStatus`
 * (not yet provided, not recorded, not applicable yet, withheld) is taken off the
 * required list for that document only: `passportSchema(tier, absent)`.
 */

type Schema = Record<string, unknown>;

const DATE_TIME =
	'^-?([1-9][0-9]{3,}|0[0-9]{3})-(0[1-9]|1[0-2])-(0[1-9]|[12][0-9]|3[01])T(([01][0-9]|2[0-3]):[0-5][0-9]:[0-5][0-9](\\.[0-9]+)?|(24:00:00(\\.0+)?))(Z|(\\+|-)((0[0-9]|1[0-3]):[0-5][0-9]|14:00))?$';
const URI = '^(https?://[^\\s]+|urn:[A-Za-z0-9][A-Za-z0-9-]*:[^\\s]+)$';

const str: Schema = { type: 'string' };
const num: Schema = { type: 'number' };
const dateTime: Schema = { type: 'string', pattern: DATE_TIME };
const uri: Schema = { type: 'string', pattern: URI };
const obj = (properties: Record<string, Schema>, required: string[]): Schema => ({
	type: 'object',
	properties,
	required
});
const arr = (items: Schema): Schema => ({ type: 'array', items });
const timestamped = (valueKey: string, value: Schema = num) =>
	obj({ [valueKey]: value, lastUpdate: dateTime }, [valueKey, 'lastUpdate']);

const postalAddress = obj({ addressCountry: str, postalCode: str, streetAddress: str }, [
	'addressCountry',
	'postalCode',
	'streetAddress'
]);
const contact = obj({ contactName: str, postalAddress, identifier: str, webAddress: uri }, [
	'contactName',
	'postalAddress',
	'identifier'
]);

export const generalProductInformationSchema = obj(
	{
		productIdentifier: str,
		batteryPassportIdentifier: { type: 'string', pattern: '^urn:[a-z0-9]+:[a-z0-9]+$' },
		batteryCategory: { type: 'string', enum: ['lmt', 'ev', 'industrial', 'stationary'] },
		manufacturerInformation: contact,
		manufacturingDate: dateTime,
		batteryStatus: {
			type: 'string',
			enum: ['Original', 'Repurposed', 'Reused', 'Remanufactured', 'Waste']
		},
		batteryMass: num,
		manufacturingPlace: postalAddress,
		operatorInformation: contact,
		puttingIntoService: dateTime,
		warrentyPeriod: { type: 'string', pattern: '^P[0-9]+M$' }
	},
	[
		'productIdentifier',
		'batteryPassportIdentifier',
		'batteryCategory',
		'manufacturerInformation',
		'manufacturingDate',
		'batteryStatus',
		'batteryMass',
		'manufacturingPlace',
		'operatorInformation',
		'puttingIntoService',
		'warrentyPeriod'
	]
);

const batteryComponent: Schema = { type: 'string', enum: ['pack', 'module', 'cell'] };
const powerAt = obj({ atSoC: num, powerCapabilityAt: num }, ['atSoC', 'powerCapabilityAt']);

export const batteryTechicalPropertiesSchema = obj(
	{
		originalPowerCapability: arr(powerAt),
		ratedMaximumPower: num,
		powerCapabilityRatio: num,
		ratedEnergy: num,
		expectedNumberOfCycles: { type: 'number', minimum: 0 },
		initialSelfDischarge: num,
		roundtripEfficiency: num,
		ratedCapacity: num,
		initialInternalResistance: arr(
			obj({ ohmicResistance: num, batteryComponent }, ['ohmicResistance', 'batteryComponent'])
		),
		expectedLifetime: { type: 'number', minimum: -32768, maximum: 32767 },
		cRate: num,
		nominalVoltage: num,
		minimumVoltage: num,
		maximumVoltage: num,
		capacityThresholdForExhaustion: num,
		lifetimeReferenceTest: uri,
		cRateLifeCycleTest: num,
		temperatureRangeIdleState: { type: 'number', minimum: -20, maximum: 60 }
	},
	[
		'originalPowerCapability',
		'ratedMaximumPower',
		'powerCapabilityRatio',
		'ratedEnergy',
		'expectedNumberOfCycles',
		'initialSelfDischarge',
		'roundtripEfficiency',
		'ratedCapacity',
		'initialInternalResistance',
		'expectedLifetime',
		'nominalVoltage',
		'minimumVoltage',
		'maximumVoltage',
		'capacityThresholdForExhaustion',
		'lifetimeReferenceTest',
		'cRateLifeCycleTest',
		'temperatureRangeIdleState'
	]
);

export const batteryConditionSchema = obj(
	{
		energyThroughput: num,
		capacityThroughput: timestamped('capacityThroughputValue'),
		numberOfFullCycles: timestamped('numberOfFullCyclesValue', { type: 'integer' }),
		stateOfCertifiedEnergy: timestamped('stateOfCertifiedEnergyValue'),
		capacityFade: timestamped('capacityFadeValue'),
		remainingEnergy: timestamped('remainingEnergyalue'),
		remainingCapacity: timestamped('remainingCapacityValue'),
		negativeEvents: arr(timestamped('negativeEvent', str)),
		temperatureInformation: obj(
			{
				timeExtremeHighTemp: num,
				timeExtremeLowTemp: num,
				timeExtremeHighTempCharging: num,
				timeExtremeLowTempCharging: num,
				lastUpdate: dateTime
			},
			[
				'timeExtremeHighTemp',
				'timeExtremeLowTemp',
				'timeExtremeHighTempCharging',
				'timeExtremeLowTempCharging',
				'lastUpdate'
			]
		),
		remainingPowerCapability: arr(
			obj(
				{
					remainingPowerCapabilityValue: {
						allOf: [powerAt, obj({ rPCLastUpdated: dateTime }, ['rPCLastUpdated'])]
					},
					lastUpdate: dateTime
				},
				['remainingPowerCapabilityValue', 'lastUpdate']
			)
		),
		powerFade: num,
		roundTripEfficiencyFade: num,
		evolutionOfSelfDischarge: obj({ evolutionOfSelfDischargeEntityValue: num }, [
			'evolutionOfSelfDischargeEntityValue'
		]),
		currentSelfDischargingRate: timestamped('currentSelfDischargingRateEntity'),
		internalResistanceIncrease: arr(
			obj({ internalResistanceIncreaseValue: num, lastUpdate: dateTime, batteryComponent }, [
				'internalResistanceIncreaseValue',
				'lastUpdate',
				'batteryComponent'
			])
		),
		roundTripEfficiencyat50PerCentCycleLife: num,
		remainingRoundTripEnergyEfficiency: timestamped('remainingRoundTripEnergyEfficiencyValue'),
		stateOfCharge: timestamped('stateOfChargeValue')
	},
	[
		'energyThroughput',
		'capacityThroughput',
		'numberOfFullCycles',
		'stateOfCertifiedEnergy',
		'capacityFade',
		'remainingEnergy',
		'remainingCapacity',
		'negativeEvents',
		'temperatureInformation',
		'remainingPowerCapability',
		'powerFade',
		'roundTripEfficiencyFade',
		'evolutionOfSelfDischarge',
		'currentSelfDischargingRate',
		'internalResistanceIncrease',
		'roundTripEfficiencyat50PerCentCycleLife',
		'remainingRoundTripEnergyEfficiency',
		'stateOfCharge'
	]
);

export const performanceSchema = obj(
	{
		batteryTechicalProperties: batteryTechicalPropertiesSchema,
		batteryCondition: batteryConditionSchema
	},
	['batteryTechicalProperties', 'batteryCondition']
);

const CAS = '^\\d{2,7}-\\d{2}-\\d{1}$';
const location = obj({ componentName: str, componentId: str }, ['componentName']);

export const materialCompositionSchema = obj(
	{
		batteryChemistry: obj({ shortName: str, clearName: str }, ['shortName', 'clearName']),
		batteryMaterials: arr(
			obj(
				{
					batteryMaterialLocation: location,
					batteryMaterialIdentifier: { type: 'string', pattern: CAS },
					batteryMaterialName: str,
					batteryMaterialMass: num,
					isCriticalRawMaterial: { type: 'boolean' }
				},
				[
					'batteryMaterialLocation',
					'batteryMaterialIdentifier',
					'batteryMaterialName',
					'batteryMaterialMass',
					'isCriticalRawMaterial'
				]
			)
		),
		hazardousSubstances: arr(
			obj(
				{
					hazardousSubstanceClass: {
						type: 'string',
						enum: ['AcuteToxicity', 'SkinCorrosionOrIrritation', 'EyeDamageOrIrritation']
					},
					hazardousSubstanceName: str,
					hazardousSubstanceConcentration: num,
					hazardousSubstanceImpact: arr(str),
					hazardousSubstanceLocation: location,
					hazardousSubstanceIdentifier: { type: 'string', pattern: CAS }
				},
				[
					'hazardousSubstanceClass',
					'hazardousSubstanceName',
					'hazardousSubstanceConcentration',
					'hazardousSubstanceImpact',
					'hazardousSubstanceLocation',
					'hazardousSubstanceIdentifier'
				]
			)
		)
	},
	['batteryChemistry', 'batteryMaterials', 'hazardousSubstances']
);

export const carbonFootprintSchema = obj(
	{
		batteryCarbonFootprint: num,
		carbonFootprintPerLifecycleStage: arr(
			obj(
				{
					lifecycleStage: {
						type: 'string',
						enum: ['RawMaterialExtraction', 'MainProduction', 'Distribution', 'Recycling']
					},
					carbonFootprint: num
				},
				['lifecycleStage', 'carbonFootprint']
			)
		),
		carbonFootprintPerformanceClass: str,
		carbonFootprintStudy: uri,
		absoluteCarbonFootprint: num
	},
	[
		'batteryCarbonFootprint',
		'carbonFootprintPerLifecycleStage',
		'carbonFootprintPerformanceClass',
		'carbonFootprintStudy'
	]
);

const share: Schema = { type: 'number', minimum: 0, maximum: 100 };
export const circularitySchema = obj(
	{
		dismantlingAndRemovalInformation: arr(
			obj(
				{
					documentType: {
						type: 'string',
						enum: [
							'BillOfMaterial',
							'Model3D',
							'DismantlingManual',
							'RemovalManual',
							'OtherManual',
							'Drawing'
						]
					},
					mimeType: str,
					documentURL: uri
				},
				['documentType', 'mimeType', 'documentURL']
			)
		),
		sparePartSources: arr(
			obj(
				{
					nameOfSupplier: str,
					addressOfSupplier: postalAddress,
					emailAddressOfSupplier: str,
					supplierWebAddress: uri,
					components: arr(obj({ partName: str, partNumber: str }, ['partName', 'partNumber']))
				},
				[
					'nameOfSupplier',
					'addressOfSupplier',
					'emailAddressOfSupplier',
					'supplierWebAddress',
					'components'
				]
			)
		),
		recycledContent: arr(
			obj(
				{
					preConsumerShare: share,
					recycledMaterial: { type: 'string', enum: ['Cobalt', 'Nickel', 'Lithium', 'Lead'] },
					postConsumerShare: share
				},
				['preConsumerShare', 'recycledMaterial', 'postConsumerShare']
			)
		),
		safetyMeasures: obj({ safetyInstructions: uri, extinguishingAgent: arr(str) }, [
			'safetyInstructions',
			'extinguishingAgent'
		]),
		endOfLifeInformation: obj(
			{ wastePrevention: uri, separateCollection: uri, informationOnCollection: uri },
			['wastePrevention', 'separateCollection', 'informationOnCollection']
		),
		renewableContent: { type: 'number', minimum: 0, maximum: 100 }
	},
	[
		'dismantlingAndRemovalInformation',
		'sparePartSources',
		'recycledContent',
		'safetyMeasures',
		'endOfLifeInformation',
		'renewableContent'
	]
);

const SECTIONS: Record<string, Schema> = {
	generalProductInformation: generalProductInformationSchema,
	performance: performanceSchema,
	materialComposition: materialCompositionSchema,
	carbonFootprint: carbonFootprintSchema,
	circularity: circularitySchema
};

/** A deep copy with the attribute at `pointer` (e.g. /performance/batteryCondition) no longer required. */
function relax(root: Schema, pointer: string): void {
	const parts = pointer.split('/').slice(1);
	let node: Schema = root;
	for (const [i, part] of parts.entries()) {
		const props = node.properties as Record<string, Schema> | undefined;
		if (!props || !props[part])
			throw new Error(`The passport schema has no attribute at ${pointer}.`);
		if (i === parts.length - 1) {
			node.required = (node.required as string[]).filter((r) => r !== part);
			return;
		}
		node = props[part];
	}
}

/**
 * The schema of a whole passport document of a tier. The public tier must not carry the
 * battery condition (Annex XIII §4). `absent` lists the JSON pointers the document's
 * itemStatus declares absent; each is taken off the required list.
 */
export function passportSchema(
	tier: 'public' | 'restricted' | 'full',
	absent: string[] = []
): Schema {
	const sections = JSON.parse(JSON.stringify(SECTIONS)) as Record<string, Schema>;
	const root: Schema = {
		$schema: 'http://json-schema.org/draft-04/schema#',
		title: `Battery passport (${tier} tier), Battery Pass data model v1.2.0 sections`,
		type: 'object',
		properties: {
			passportFormat: obj({ dataModel: str, version: { enum: ['1.2.0'] }, basis: str }, [
				'dataModel',
				'version'
			]),
			identifier: str,
			tier: { enum: [tier] },
			issuedAt: dateTime,
			...sections,
			supplementary: { type: 'object' },
			itemStatus: arr(
				obj(
					{
						path: { type: 'string', pattern: '^/' },
						status: {
							enum: [
								'not_yet_provided',
								'not_recorded',
								'not_applicable_yet',
								'withheld',
								'see_supplementary'
							]
						},
						note: { type: 'string', minLength: 1 }
					},
					['path', 'status', 'note']
				)
			),
			units: { type: 'object', additionalProperties: str }
		},
		required: [
			'passportFormat',
			'identifier',
			'tier',
			'issuedAt',
			'generalProductInformation',
			'performance',
			'itemStatus'
		]
	};
	if (tier === 'public') {
		(root.properties as Record<string, Schema>).performance = {
			allOf: [sections.performance, { not: { type: 'object', required: ['batteryCondition'] } }]
		};
		(root.properties as Record<string, Schema>).supplementary = {
			type: 'object',
			not: {
				anyOf: [
					{ type: 'object', required: ['condition'] },
					{ type: 'object', required: ['history'] }
				]
			}
		};
	} else if (tier === 'restricted') {
		(root.properties as Record<string, Schema>).supplementary = {
			type: 'object',
			not: { type: 'object', required: ['history'] }
		};
	}
	for (const p of absent) {
		const [, section] = p.split('/');
		// A whole optional category absent: categories other than the two below are not required.
		if (p.split('/').length === 2) {
			if (section === 'generalProductInformation' || section === 'performance')
				throw new Error(`${p} cannot be absent from a passport.`);
			continue;
		}
		const target =
			tier === 'public' && section === 'performance'
				? ((root.properties as Record<string, Schema>).performance.allOf as Schema[])[0]
				: (root.properties as Record<string, Schema>)[section];
		relax({ properties: { [section]: target }, required: [] }, p);
	}
	return root;
}
