/**
 * What anyone who scans a label may see: no customer, owner or site data.
 * Shaped after the public items of a battery passport (Regulation (EU) 2023/1542,
 * Annex XIII §1: rated capacity, voltage limits with temperature ranges, original power
 * capability, expected lifetime in cycles with its reference conditions, commercial
 * warranty period) so it can grow into one. Per-battery items of Annex XIII §4 (state of
 * health, cycles, events) are restricted there and are deliberately absent here.
 */
import { deriveFigures, type ModelSpec, type WarrantyTerms } from './model';
import { passportStatusOf, type PassportStatus } from './module-status';
import { conditionOf, type ConditionInput } from './module-condition';

export type { PassportStatus };

export interface PublicRecord {
	identifier: string;
	manufacturer: { name: string; contact: string | null };
	model: {
		code: string;
		name: string;
		gtin: string | null;
		ratedCapacityAh: number;
		nominalVoltageV: number;
		minVoltageV: number;
		maxVoltageV: number;
		usableEnergyWh: number;
		originalPowerCapabilityW: { continuous: number; burst: number; burstSeconds: number };
		temperatureRangeC: { charge: [number, number]; discharge: [number, number] };
		massKg: number;
		expectedLifetime: {
			equivalentFullCycles: number;
			atTemperatureC: number;
			endRetentionPct: number;
		};
		commercialWarrantyYears: number;
	};
	buildMonth: string | null;
	/** May the module be installed; the sentence says why first, "Do not install" where it applies. */
	installable: boolean;
	condition: { warning: 'Do not install' | null; sentence: string };
	/** An open service campaign on the module. */
	campaign: { reference: string; title: string; remedy: string } | null;
	/** The module this one replaced under a claim (it carries that module's remaining warranty). */
	replaces: string | null;
	/** The module that replaced this one. */
	replacedBy: string | null;
	status: PassportStatus;
	warranty: {
		/** 'moved': a returned or replaced module's remaining warranty went to its replacement; 'none': no warranty applies. */
		state: 'not-started' | 'active' | 'ended' | 'moved' | 'none';
		startsOn: string | null;
		endsOn: string | null;
		note: string;
	};
	contact: { name: string; email: string | null; kind: 'dealer' | 'assembler' };
}

export interface PublicRecordInput {
	serial: string;
	model: ModelSpec & WarrantyTermsColumns;
	builtAt: Date | null;
	state: string;
	warranty: { startsOn: string; endsOn: string } | null;
	assembler: { name: string; email: string | null };
	dealer: { name: string; email: string | null } | null;
	today: string;
	/** What the condition needs beyond the state; all optional for callers that know none of it. */
	lastTest?: ConditionInput['lastTest'];
	reworked?: boolean;
	campaign?: ConditionInput['campaign'];
	replacedBy?: string | null;
	replaces?: string | null;
	scrapped?: ConditionInput['scrapped'];
	lifecycleStatus?: PassportStatus | null;
}

/** States in which the module's remaining warranty has gone to its replacement. */
const WARRANTY_MOVED = new Set([
	'returned',
	'received_back',
	'inspected',
	'kept_for_analysis',
	'replaced'
]);
/** States in which no warranty applies to the module any more, or not yet. */
const NO_WARRANTY = new Set(['scrapped', 'test_failed', 'built', 'allocated']);

interface WarrantyTermsColumns {
	warrantyYears: number;
	ratedCycles: number;
	referenceTempC: number;
	endRetentionPct: number;
}

export function toPublicRecord(i: PublicRecordInput): PublicRecord {
	const f = deriveFigures(i.model);
	const condition = conditionOf({
		state: i.state,
		lastTest: i.lastTest ?? null,
		reworked: i.reworked ?? false,
		campaign: i.campaign ?? null,
		replacedBy: i.replacedBy ?? null,
		scrapped: i.scrapped ?? null
	});
	const warranty: PublicRecord['warranty'] = WARRANTY_MOVED.has(i.state)
		? {
				state: 'moved',
				startsOn: i.warranty?.startsOn ?? null,
				endsOn: i.warranty?.endsOn ?? null,
				note: i.replacedBy
					? `No warranty: its remaining warranty moved to its replacement ${i.replacedBy}.`
					: 'No warranty: this module was taken out of service under a claim.'
			}
		: NO_WARRANTY.has(i.state)
			? {
					state: 'none',
					startsOn: null,
					endsOn: null,
					note:
						i.state === 'scrapped'
							? 'No warranty: this module was scrapped.'
							: 'No warranty applies while the module is held at the factory; it would start when a system with a passed module is commissioned.'
				}
			: !i.warranty
				? {
						state: 'not-started',
						startsOn: null,
						endsOn: null,
						note: 'The warranty starts when the system is commissioned.'
					}
				: i.today <= i.warranty.endsOn
					? {
							state: 'active',
							...i.warranty,
							note: i.replaces
								? `Under warranty until ${i.warranty.endsOn}, subject to its terms: the remaining warranty of ${i.replaces}, which this module replaced.`
								: `Under warranty until ${i.warranty.endsOn}, subject to its terms.`
						}
					: {
							state: 'ended',
							...i.warranty,
							note: `The warranty period ended on ${i.warranty.endsOn}.`
						};
	return {
		identifier: i.serial,
		manufacturer: { name: i.assembler.name, contact: i.assembler.email },
		model: {
			code: i.model.code,
			name: i.model.name,
			gtin: i.model.gtin,
			ratedCapacityAh: i.model.ratedAh,
			nominalVoltageV: f.nominalV,
			minVoltageV: f.minV,
			maxVoltageV: f.maxV,
			usableEnergyWh: i.model.usableWh,
			originalPowerCapabilityW: {
				continuous: Math.round(f.maxContinuousA * f.nominalV),
				burst: Math.round(f.burstA * f.nominalV),
				burstSeconds: i.model.burstSeconds
			},
			temperatureRangeC: {
				charge: [i.model.chargeTempMinC, i.model.chargeTempMaxC],
				discharge: [i.model.dischargeTempMinC, i.model.dischargeTempMaxC]
			},
			massKg: i.model.massKg,
			expectedLifetime: {
				equivalentFullCycles: i.model.ratedCycles,
				atTemperatureC: i.model.referenceTempC,
				endRetentionPct: i.model.endRetentionPct
			},
			commercialWarrantyYears: i.model.warrantyYears
		},
		buildMonth: i.builtAt ? i.builtAt.toISOString().slice(0, 7) : null,
		installable: condition.installable,
		condition: { warning: condition.warning, sentence: condition.sentence },
		campaign: i.campaign ?? null,
		replaces: i.replaces ?? null,
		replacedBy: i.replacedBy ?? null,
		status: passportStatusOf({ state: i.state, lifecycleStatus: i.lifecycleStatus }),
		warranty,
		contact: i.dealer
			? { ...i.dealer, kind: 'dealer' }
			: { name: i.assembler.name, email: i.assembler.email, kind: 'assembler' }
	};
}

export type { WarrantyTerms };
