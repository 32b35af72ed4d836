/**
 * A system as the commissioning checklist sees it, and the checklist evaluated as entered.
 * Recording an attempt (and the certificate of a pass) is in commissioning-submit.ts.
 */
import { asc, avg, desc, eq, inArray } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	commissionings,
	factoryTests,
	moduleModels,
	modules,
	systemSlots
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import {
	blankPreview,
	evaluateCommissioning,
	systemCurrentLimitA,
	type CommissioningSystem
} from '$lib/domain/commissioning';
import { toMeasurements, type MeasurementsInput } from '$lib/schemas/commissioning';
import { ruleSetInForce } from './rule-sets';
import { businessDay } from './calendar';
import { findSystem } from './systems';

const roundMv = (x: number) => Math.round(x * 1000) / 1000;

/**
 * A system as the commissioning checklist needs it: site, model, the module in every
 * string/position (null where none is recorded), earlier attempts, and the input of the
 * domain's evaluation. A dealer's people only reach their own organisation's sites; any
 * other system answers exactly like one that does not exist.
 */
export async function loadSystemForCommissioning(
	db: Db,
	actor: Actor,
	systemId: number,
	now = new Date()
) {
	// The one dealer-scoped lookup: another dealer's system answers like a missing one.
	const { system, site } = await findSystem(db, actor, systemId);
	const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, system.modelId));

	const slots = await db
		.select({
			stringNo: systemSlots.stringNo,
			position: systemSlots.position,
			id: modules.id,
			serial: modules.serial,
			state: modules.state
		})
		.from(systemSlots)
		.innerJoin(modules, eq(systemSlots.moduleId, modules.id))
		.where(eq(systemSlots.systemId, systemId))
		.orderBy(asc(systemSlots.stringNo), asc(systemSlots.position));
	const strings = Array.from({ length: system.parallel }, (_, s) =>
		Array.from({ length: system.series }, (_, p) => {
			const slot = slots.find((x) => x.stringNo === s + 1 && x.position === p + 1);
			return {
				stringNo: s + 1,
				position: p + 1,
				module: slot ? { id: slot.id, serial: slot.serial, state: slot.state } : null
			};
		})
	);
	const attempts = await db
		.select({
			id: commissionings.id,
			overall: commissionings.overall,
			certificateNo: commissionings.certificateNo,
			commissionedOn: commissionings.commissionedOn,
			technicianName: commissionings.technicianName,
			createdAt: commissionings.createdAt
		})
		.from(commissionings)
		.where(eq(commissionings.systemId, systemId))
		.orderBy(desc(commissionings.id));

	const cells = system.series * model.cellsSeries;
	// The data sheet's internal resistance, else the mean of these modules' factory tests.
	let internalResistanceMOhm = model.internalResistanceMohm ?? null;
	if (internalResistanceMOhm === null && slots.length) {
		const [row] = await db
			.select({ mean: avg(factoryTests.dcirMohm) })
			.from(factoryTests)
			.where(
				inArray(
					factoryTests.moduleId,
					slots.map((x) => x.id)
				)
			);
		internalResistanceMOhm = row?.mean ? Math.round(Number(row.mean) * 1000) / 1000 : null;
	}
	const ruleSet = await ruleSetInForce(db, site.dealerOrgId, await businessDay(db, now));
	const evaluationSystem: CommissioningSystem = {
		series: system.series,
		parallel: system.parallel,
		maxContinuousA: systemCurrentLimitA({
			maxContinuousC: model.maxContinuousC,
			ratedAh: model.ratedAh,
			parallel: system.parallel,
			maxChargeA: system.maxChargeA,
			maxDischargeA: system.maxDischargeA
		}),
		model: {
			cellsSeries: model.cellsSeries,
			cellMinV: model.cellMinV,
			cellNominalV: model.cellNominalV,
			cellMaxV: model.cellMaxV,
			ratedAh: model.ratedAh,
			maxContinuousC: model.maxContinuousC,
			chargeTempMinC: model.chargeTempMinC,
			chargeTempMaxC: model.chargeTempMaxC,
			dischargeTempMinC: model.dischargeTempMinC,
			dischargeTempMaxC: model.dischargeTempMaxC,
			internalResistanceMOhm
		}
	};
	return {
		system,
		site: {
			id: site.id,
			name: site.name,
			address: site.address,
			ownerName: site.ownerName,
			ownerContact: site.ownerContact,
			dealerOrgId: site.dealerOrgId
		},
		ruleSet,
		model,
		strings,
		emptySlots: strings.flat().filter((s) => !s.module),
		voltages: {
			minV: roundMv(cells * model.cellMinV),
			nominalV: roundMv(cells * model.cellNominalV),
			maxV: roundMv(cells * model.cellMaxV)
		},
		evaluationSystem,
		preview: blankPreview(evaluationSystem, ruleSet),
		attempts
	};
}

export type SystemForCommissioning = Awaited<ReturnType<typeof loadSystemForCommissioning>>;

/** The checklist evaluated as entered, without storing anything (the page's preview runs the same function). */
export function evaluateDraft(
	system: Pick<SystemForCommissioning, 'evaluationSystem' | 'ruleSet'>,
	input: MeasurementsInput
) {
	return evaluateCommissioning(system.evaluationSystem, toMeasurements(input), system.ruleSet);
}
