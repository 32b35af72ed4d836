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
	status: PassportStatus;
	warranty: {
		state: 'not-started' | 'active' | 'ended';
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
}

interface WarrantyTermsColumns {
	warrantyYears: number;
	ratedCycles: number;
	referenceTempC: number;
	endRetentionPct: number;
}

export function toPublicRecord(i: PublicRecordInput): PublicRecord {
	const f = deriveFigures(i.model);
	const warranty: PublicRecord['warranty'] = !i.warranty
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
					note: `Under warranty until ${i.warranty.endsOn}, subject to its terms.`
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
		status: passportStatusOf({ state: i.state }),
		warranty,
		contact: i.dealer
			? { ...i.dealer, kind: 'dealer' }
			: { name: i.assembler.name, email: i.assembler.email, kind: 'assembler' }
	};
}

export type { WarrantyTerms };
