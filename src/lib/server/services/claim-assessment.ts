import { and, asc, count, eq } from 'drizzle-orm';
import { attachments } from '$lib/server/db/schema';
import { assessFaultClaim, needsThroughput, type ClaimFault } from '$lib/domain/claim-workflow';
import { deriveFigures } from '$lib/domain/model';
import type { Db, Tx } from '$lib/server/db';
import { claimModules, claims, moduleModels, modules } from '$lib/server/db/schema';
import { assessClaim, type ClaimAssessment, type ClaimInput } from '$lib/domain/warranty';
import { warrantyTermsOf, type WarrantyTerms } from '$lib/domain/model';
import { warrantyTermsSchema, type ClaimEvidence } from '$lib/schemas/warranty-assess';
import type { LogSummaryEvidence } from '$lib/schemas/claim';
import { calendarDay } from '$lib/domain/calendar';
import { assemblerCalendar } from './calendar';
import { modulesInSystem, stopChargeProof, type StopChargeProof } from './claim-system-facts';
import { fmtNumber, implausibleEvidence, perModuleThroughput } from '$lib/domain/claim-evidence';

export { fmtNumber, implausibleEvidence, perModuleThroughput };

type Conn = Db | Tx;
type ClaimRow = typeof claims.$inferSelect;
type ModelRow = typeof moduleModels.$inferSelect;
type ModuleRow = typeof modules.$inferSelect;

/**
 * A claim's evidence as stored. `throughputScope` says whose throughput `throughputWh` is:
 * 'system' (the default: an inverter log counts the energy of the whole battery) is shared
 * equally over the system's modules for the per-module cycles; 'module' is used as given.
 */
export interface StoredEvidence extends ClaimEvidence {
	throughputScope: 'system' | 'module';
	log?: LogSummaryEvidence | null;
}

export interface ClaimAssessmentResult extends ClaimAssessment {
	claimedOn: string;
	/** The first claimed module's input, which the what-if panel starts from. */
	input: ClaimInput;
	throughputShare: { systemWh: number; modules: number; perModuleWh: number } | null;
	stopCharge: StopChargeProof;
	modules: { serial: string; assessment: ClaimAssessment }[];
}

export function parseEvidence(json: string): StoredEvidence {
	const e = JSON.parse(json) as StoredEvidence;
	return { ...e, throughputScope: e.throughputScope === 'module' ? 'module' : 'system' };
}

/**
 * The warranty terms a module was commissioned under. The snapshot may use the domain's
 * names (`years`) or the model's column names (`warrantyYears`); when it is missing or
 * unreadable, the model's current terms stand in and a reason says so.
 */
export function termsOf(
	snapshot: string | null,
	model: ModelRow
): { terms: WarrantyTerms; note: string | null } {
	const current = warrantyTermsOf(model);
	if (!snapshot)
		return {
			terms: current,
			note: `No warranty terms were recorded at commissioning, so the ${model.code}'s current terms are used.`
		};
	let raw: Record<string, unknown> = {};
	try {
		raw = JSON.parse(snapshot) ?? {};
	} catch {
		/* handled below as unreadable */
	}
	const parsed = warrantyTermsSchema.safeParse({ ...raw, years: raw.years ?? raw.warrantyYears });
	if (parsed.success) return { terms: parsed.data, note: null };
	return {
		terms: current,
		note: `The warranty terms recorded at commissioning could not be read, so the ${model.code}'s current terms are used: check the module's record.`
	};
}

/** Events outside the limits: the ones described, plus a logged maximum above the model's discharge limit. */
function eventsOf(evidence: StoredEvidence, model: ModelRow): string[] {
	const listed = (evidence.eventsOutsideLimits ?? '')
		.split(/\r?\n|;/)
		.map((s) => s.trim())
		.filter(Boolean);
	if (evidence.maxCellTempC !== undefined && evidence.maxCellTempC > model.dischargeTempMaxC) {
		listed.push(
			`a maximum cell temperature of ${fmtNumber(evidence.maxCellTempC, 1)} °C, above the ${model.code}'s ${fmtNumber(model.dischargeTempMaxC, 1)} °C limit`
		);
	}
	return listed;
}

function assessSafely(input: ClaimInput): ClaimAssessment {
	try {
		return assessClaim(input);
	} catch (e) {
		if (!(e instanceof RangeError)) throw e;
		return {
			recommendation: 'need-evidence',
			withinTerm: null,
			yearsElapsed: null,
			termEndsOn: null,
			equivalentFullCycles: null,
			cycleBasis: null,
			deratedRatedCycles: input.terms.ratedCycles,
			activationEnergyKJPerMol: 0,
			effectiveCellTempC: null,
			temperatureBasis: null,
			retentionPct: null,
			promisedRetentionPct: null,
			retentionPrecisionPct: 0.01,
			measurementMarginPct: null,
			reasons: [`The assessment could not be computed from the record: ${e.message}`]
		};
	}
}

/**
 * The assessment of a claim, built from each claimed module's warranty snapshot (terms,
 * start date, rated Ah and usable Wh of its model), the evidence, and the stop-charge proof
 * of the system's latest passing commissioning. Every claimed module is assessed; where
 * they differ, the claim asks the officer to weigh each one.
 */
export async function assessmentFor(conn: Conn, claim: ClaimRow): Promise<ClaimAssessmentResult> {
	const evidence = parseEvidence(claim.evidence);
	const rows = await conn
		.select({ module: modules, model: moduleModels })
		.from(claimModules)
		.innerJoin(modules, eq(claimModules.moduleId, modules.id))
		.innerJoin(moduleModels, eq(modules.modelId, moduleModels.id))
		.where(eq(claimModules.claimId, claim.id))
		.orderBy(asc(modules.serial));
	const moduleCount = await modulesInSystem(conn, claim.systemId);
	const stopCharge = await stopChargeProof(conn, claim.systemId);
	const { timeZone } = await assemblerCalendar(conn);
	// The claim is dated by the assembler's calendar, as is the warranty start it is compared with.
	const claimedOn = calendarDay(claim.filedAt, timeZone);
	const perModuleWh = perModuleThroughput(evidence, moduleCount);

	const preface: string[] = [];
	let throughputShare: ClaimAssessmentResult['throughputShare'] = null;
	if (evidence.throughputWh !== undefined && perModuleWh !== null) {
		if (evidence.throughputScope === 'system') {
			throughputShare = { systemWh: evidence.throughputWh, modules: moduleCount, perModuleWh };
			preface.push(
				`The throughput of ${fmtNumber(evidence.throughputWh)} Wh is the whole system's, as an inverter records it; shared equally over the system's ${moduleCount} ${moduleCount === 1 ? 'module' : 'modules'}, each module's part is ${fmtNumber(perModuleWh)} Wh, and its cycles are counted from that.`
			);
		} else {
			preface.push(
				`The throughput of ${fmtNumber(evidence.throughputWh)} Wh was given for the module itself, so it is used as it stands.`
			);
		}
	}
	if (stopCharge) {
		preface.push(
			stopCharge.proven
				? `The commissioning of ${stopCharge.commissionedOn}${stopCharge.certificateNo ? ` (certificate ${stopCharge.certificateNo})` : ''} proved the stop-charge signal.`
				: `The commissioning of ${stopCharge.commissionedOn}${stopCharge.certificateNo ? ` (certificate ${stopCharge.certificateNo})` : ''} passed, but the stop-charge signal is not recorded as proven.`
		);
	} else {
		preface.push('No passing commissioning of the system is on record.');
	}

	const assessed = rows.map(({ module, model }) => ({
		module,
		model,
		...assessModule(module, model, evidence, perModuleWh, stopCharge, claimedOn, timeZone)
	}));
	if (!assessed.length) throw new Error(`Claim ${claim.reference} has no modules.`);
	const [first] = assessed;
	const faultCode = claim.faultCode as ClaimFault | null;
	if (faultCode && (claim.kind === 'on-delivery' || !needsThroughput(faultCode))) {
		// Outside the cycle-life figures: what the fault needs, from photos and the terminal voltage.
		const [{ n: photos }] = await conn
			.select({ n: count() })
			.from(attachments)
			.where(and(eq(attachments.ownerKind, 'claim'), eq(attachments.ownerId, claim.id)));
		const fault = assessFaultClaim({
			kind: claim.kind,
			fault: faultCode,
			shippedOn: first.module.shippedAt ? calendarDay(first.module.shippedAt, timeZone) : null,
			claimedOn,
			withinTerm: first.module.warrantyEndsOn ? claimedOn <= first.module.warrantyEndsOn : null,
			photos,
			terminalVoltageV: evidence.terminalVoltageV ?? null,
			minVoltageV: deriveFigures(first.model).minV
		});
		const assessment = {
			...first.assessment,
			recommendation: fault.recommendation,
			reasons: fault.reasons
		};
		return {
			...assessment,
			reasons: [...(claim.kind === 'in-service' ? preface.slice(-1) : []), ...fault.reasons],
			claimedOn,
			input: first.input,
			throughputShare: null,
			stopCharge,
			modules: assessed.map((a) => ({ serial: a.module.serial, assessment }))
		};
	}
	const reasons = [...preface, ...(first.note ? [first.note] : []), ...first.assessment.reasons];
	let recommendation = first.assessment.recommendation;
	const differing = assessed.filter(
		(a) =>
			a.assessment.recommendation !== recommendation ||
			a.assessment.termEndsOn !== first.assessment.termEndsOn
	);
	if (differing.length) {
		recommendation = 'need-evidence';
		reasons.push(
			`The claimed modules' warranty records differ (${assessed.map((a) => `${a.module.serial}: ${a.assessment.recommendation}, term to ${a.assessment.termEndsOn ?? 'unknown'}`).join('; ')}): weigh each module's assessment.`
		);
	}
	return {
		...first.assessment,
		recommendation,
		reasons,
		claimedOn,
		input: first.input,
		throughputShare,
		stopCharge,
		modules: assessed.map((a) => ({ serial: a.module.serial, assessment: a.assessment }))
	};
}

function assessModule(
	module: ModuleRow,
	model: ModelRow,
	evidence: StoredEvidence,
	perModuleWh: number | null,
	stopCharge: ClaimAssessmentResult['stopCharge'],
	claimedOn: string,
	timeZone: string
) {
	const { terms, note } = termsOf(module.warrantyTerms, model);
	const events = eventsOf(evidence, model);
	const input: ClaimInput = {
		terms,
		commissionedOn:
			module.warrantyStartsOn ??
			(module.commissionedAt ? calendarDay(module.commissionedAt, timeZone) : null),
		claimedOn,
		ratedCapacityAh: model.ratedAh,
		measuredCapacityAh: evidence.measuredCapacityAh ?? null,
		measuredAtC: evidence.measuredAtC ?? null,
		usableWh: model.usableWh,
		throughputWh: perModuleWh === null ? null : Math.round(perModuleWh * 1000) / 1000,
		cycles: evidence.cycleCount ?? null,
		avgCellTempC: evidence.avgCellTempC ?? null,
		temperatureProfile: evidence.log?.temperatureProfile?.length
			? evidence.log.temperatureProfile
			: null,
		stopChargeProven: stopCharge ? stopCharge.proven : null,
		eventsOutsideLimits: events.length ? events : null
	};
	return { input, note, assessment: assessSafely(input) };
}
