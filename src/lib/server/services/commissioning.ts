import { and, asc, avg, desc, eq, inArray } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import {
	attachments,
	commissionings,
	factoryTests,
	moduleModels,
	modules,
	systems,
	systemSlots
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError } from '$lib/server/errors';
import {
	evaluateCommissioning,
	systemCurrentLimitA,
	type CommissioningItem,
	type CommissioningSystem
} from '$lib/domain/commissioning';
import { warrantyTermEnd } from '$lib/domain/warranty';
import { STATE_LABELS } from '$lib/module-states';
import {
	toMeasurements,
	type CommissioningInput,
	type MeasurementsInput
} from '$lib/schemas/commissioning';
import { recordAudit, recordEvent } from './audit';
import { ruleSetInForce } from './rule-sets';
import { businessDay } from './calendar';
import { nextYearlyReference } from './sequences';
import {
	canonicalContent,
	mailCertificate,
	organisationName,
	sha256Hex,
	type CertificateMail,
	type Snapshot
} from './certificates';
import { findSystem } from './systems';
import { warrantyTermsOf } from '$lib/domain/model';
import { endOf, mayMove, statesFrom } from '$lib/domain/module-lifecycle';

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

/** Next certificate number of a year: PLC-{YYYY}-{NNNNN}. Call inside the write transaction. */
function nextCertificateNo(tx: Tx, year: number): Promise<string> {
	return nextYearlyReference(tx, commissionings, commissionings.certificateNo, {
		code: 'PLC',
		year,
		width: 5
	});
}

export interface SubmitResult {
	id: number;
	overall: 'pass' | 'fail' | 'incomplete';
	certificateNo: string | null;
	commissionedOn: string;
	items: CommissioningItem[];
	/** Where the certificate went (to the dealer, and the owner when their e-mail is known). */
	mail: CertificateMail | null;
}

/**
 * Records one commissioning attempt of a system. Refused when a slot has no module, a
 * module is not installed, or the system is already commissioned. The checklist is
 * evaluated and stored whatever the outcome, so a fail or an incomplete attempt shows
 * what to correct and can be repeated. A pass gives a certificate number, commissions the
 * system and every module, and starts each module's warranty with a snapshot of the
 * model's terms; the certificate then goes by e-mail to the site's dealer (or the
 * assembler's office for its own sites).
 */
export async function submitCommissioning(
	db: Db,
	actor: Actor,
	systemId: number,
	input: CommissioningInput,
	now = new Date()
): Promise<SubmitResult> {
	if (actor.userId === null)
		throw new InvalidInputError('A commissioning is signed by a signed-in technician.');
	const loaded = await loadSystemForCommissioning(db, actor, systemId, now);
	const { system, model, site, ruleSet } = loaded;
	const label = `${system.name} at ${site.name}`;
	if (system.status === 'commissioned') {
		const cert = loaded.attempts.find((a) => a.certificateNo);
		throw new ConflictError(
			`${label} is already commissioned${cert ? ` (certificate ${cert.certificateNo} of ${cert.commissionedOn})` : ''}; it cannot be commissioned again.`
		);
	}
	if (loaded.emptySlots.length > 0) {
		const where = loaded.emptySlots
			.map((s) => `string ${s.stringNo} position ${s.position}`)
			.join(', ');
		throw new ConflictError(
			`${label} has no module recorded at ${where}. Record every module of the system before commissioning it.`
		);
	}
	const placed = loaded.strings.flat().map((s) => ({ ...s, module: s.module! }));
	const notInstalled = placed.filter((s) => !mayMove(s.module.state, 'commission'));
	if (notInstalled.length > 0) {
		throw new ConflictError(
			`Only installed modules can be commissioned: ${notInstalled.map((s) => `${s.module.serial} is “${STATE_LABELS[s.module.state] ?? s.module.state}”`).join('; ')}.`
		);
	}

	const measurements = toMeasurements(input);
	const result = evaluateCommissioning(loaded.evaluationSystem, measurements, ruleSet);
	if (result.implausible.length > 0)
		throw new InvalidInputError(
			`The checklist was not stored: ${result.implausible.length === 1 ? 'a reading is' : 'some readings are'} implausible. ${result.implausible.join(' ')}`,
			result.implausible.map((message) => ({ path: 'readings', message }))
		);
	// The day on the assembler's calendar: a commissioning at 08:00 in UTC+10 is dated that day.
	const commissionedOn = await businessDay(db, now);
	const passed = result.overall === 'pass';
	if (passed && (!input.technicianSignature || !input.ownerSignature))
		throw new InvalidInputError(
			'Every item passed, but the certificate needs both signatures: the technician and the owner (or their representative) sign in the boxes under “Sign-off and handover”.',
			[
				...(!input.technicianSignature
					? [{ path: 'technicianSignature', message: 'The technician signs here.' }]
					: []),
				...(!input.ownerSignature
					? [{ path: 'ownerSignature', message: 'The owner or their representative signs here.' }]
					: [])
			]
		);
	const photos = await db
		.select({ id: attachments.id, sha256: attachments.sha256, caption: attachments.caption })
		.from(attachments)
		.where(and(eq(attachments.ownerKind, 'system'), eq(attachments.ownerId, systemId)))
		.orderBy(asc(attachments.id));
	const snapshot: Snapshot = {
		serials: loaded.strings.map((row) => row.map((x) => x.module?.serial ?? null)),
		photos,
		site: { name: site.name, address: site.address },
		assemblerName: await organisationName(db, null),
		installerName: await organisationName(db, site.dealerOrgId),
		shortCircuitA: result.shortCircuitA,
		internalResistanceMOhm: loaded.evaluationSystem.model.internalResistanceMOhm ?? null
	};
	const warrantyEndsOn = warrantyTermEnd(commissionedOn, model.warrantyYears);
	const terms = {
		...warrantyTermsOf(model),
		usableWh: model.usableWh,
		ratedAh: model.ratedAh
	};

	const saved = await writeTx(db, async (tx) => {
		// A second phone submitting at the same moment finds the system already commissioned here.
		const [current] = await tx
			.select({ status: systems.status })
			.from(systems)
			.where(eq(systems.id, systemId));
		if (current?.status === 'commissioned')
			throw new ConflictError(
				`${label} has just been commissioned by someone else; it cannot be commissioned again.`
			);
		const certificateNo = passed
			? await nextCertificateNo(tx, Number(commissionedOn.slice(0, 4)))
			: null;
		const content = {
			systemId,
			certificateNo,
			overall: result.overall,
			technicianName: input.technicianName,
			licenceNumber: input.licenceNumber,
			// The serial at each position is kept with the voltages measured there, and what the
			// certificate prints about the site and companies is fixed as it was on the day.
			measurements: JSON.stringify({ ...measurements, ...snapshot }),
			items: JSON.stringify(result.items),
			handoverName: input.handoverName ?? null,
			commissionedOn,
			ruleSetId: ruleSet.id,
			ruleSetVersion: ruleSet.version,
			technicianSignature: input.technicianSignature
				? JSON.stringify(input.technicianSignature)
				: null,
			ownerSignature: input.ownerSignature ? JSON.stringify(input.ownerSignature) : null
		};
		const [row] = await tx
			.insert(commissionings)
			.values({
				...content,
				technicianUserId: actor.userId!,
				contentHash: certificateNo ? sha256Hex(canonicalContent(content)) : null,
				createdAt: now
			})
			.returning({ id: commissionings.id });
		const failed = result.items
			.filter((i) => i.status !== 'pass')
			.map((i) => ({ key: i.key, status: i.status }));
		await recordAudit(tx, actor, {
			action: `commissioning.${result.overall}`,
			entity: 'system',
			entityId: systemId,
			after: {
				commissioningId: row.id,
				certificateNo,
				overall: result.overall,
				notPassed: failed,
				ruleSet: { id: ruleSet.id, market: ruleSet.market, version: ruleSet.version }
			},
			at: now
		});
		if (!passed) return { id: row.id, certificateNo };

		await tx.update(systems).set({ status: 'commissioned' }).where(eq(systems.id, systemId));
		const ids = placed.map((s) => s.module.id);
		const updated = await tx
			.update(modules)
			.set({
				state: endOf('commission'),
				commissionedAt: now,
				warrantyStartsOn: commissionedOn,
				warrantyEndsOn,
				warrantyTerms: JSON.stringify(terms),
				updatedAt: now
			})
			.where(and(inArray(modules.id, ids), inArray(modules.state, statesFrom('commission'))))
			.returning({ id: modules.id });
		if (updated.length !== ids.length)
			throw new ConflictError(
				'A module of this system changed state while it was being commissioned. Reload the page and submit again.'
			);
		for (const s of placed) {
			await recordEvent(tx, actor, {
				moduleId: s.module.id,
				kind: 'commissioned',
				summary: `Commissioned in ${label}, string ${s.stringNo} position ${s.position} (certificate ${certificateNo}); warranty ${commissionedOn} to ${warrantyEndsOn}`,
				detail: {
					certificateNo,
					commissioningId: row.id,
					systemId,
					stringNo: s.stringNo,
					position: s.position,
					warrantyStartsOn: commissionedOn,
					warrantyEndsOn,
					terms
				},
				at: now
			});
			await recordAudit(tx, actor, {
				action: 'module.commission',
				entity: 'module',
				entityId: s.module.serial,
				before: { state: 'installed' },
				after: {
					state: 'commissioned',
					certificateNo,
					warrantyStartsOn: commissionedOn,
					warrantyEndsOn,
					warrantyTerms: terms
				},
				at: now
			});
		}
		return { id: row.id, certificateNo };
	});

	const base = {
		id: saved.id,
		overall: result.overall,
		certificateNo: saved.certificateNo,
		commissionedOn,
		items: result.items
	};
	if (!saved.certificateNo) return { ...base, mail: null };
	return { ...base, mail: await mailCertificate(db, actor, saved.id) };
}
