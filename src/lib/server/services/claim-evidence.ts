/** Use case: adding or correcting a claim's evidence before the decision. */
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { claimModules, moduleModels, modules } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError } from '$lib/server/errors';
import { mayAddEvidence, stateAfterEvidence } from '$lib/domain/claim-workflow';
import { claimEvidenceSchema, faultEvidenceSchema } from '$lib/schemas/warranty-assess';
import { needsThroughput, type ClaimFault } from '$lib/domain/claim-workflow';
import { type AddEvidenceInput } from '$lib/schemas/claim';
import { toIssues } from '$lib/server/validation';
import { recordAudit } from './audit';
import { loadClaim, mailFiler } from './claims';
import {
	fmtNumber,
	implausibleEvidence,
	parseEvidence,
	type StoredEvidence
} from './claim-assessment';
import { modulesInSystem } from './claim-system-facts';
import { assemblerCalendar } from './calendar';

import { label, logStep, setState } from './claim-steps';
import { evidenceAdded } from '$lib/server/mail/templates/claims';

const EVIDENCE_KEYS = [
	'measuredCapacityAh',
	'measuredAtC',
	'throughputWh',
	'cycleCount',
	'avgCellTempC',
	'maxCellTempC',
	'terminalVoltageV',
	'eventsOutsideLimits',
	'description'
] as const;
const EVIDENCE_WORDS: Record<(typeof EVIDENCE_KEYS)[number], string> = {
	measuredCapacityAh: 'measured capacity (Ah)',
	measuredAtC: 'test temperature (°C)',
	throughputWh: 'throughput (Wh)',
	cycleCount: 'cycle count',
	avgCellTempC: 'average cell temperature (°C)',
	maxCellTempC: 'maximum cell temperature (°C)',
	terminalVoltageV: 'terminal voltage (V)',
	eventsOutsideLimits: 'events outside limits',
	description: 'description'
};

/**
 * Adds or corrects evidence before the decision, by the filer's organisation or the
 * assembler's staff. Blank fields keep what is on record; the merged evidence is checked
 * like at filing. A claim waiting for evidence goes back under review.
 */
export async function addEvidence(
	db: Db,
	actor: Actor,
	claimId: number,
	patch: AddEvidenceInput,
	now = new Date()
) {
	assertCan(
		actor,
		'addClaimEvidence',
		'Evidence is added by the dealer, a technician or warranty staff.'
	);
	const claim = await loadClaim(db, actor, claimId);
	if (!mayAddEvidence(claim.state))
		throw new ConflictError(
			`Claim ${claim.reference} is ${label(claim.state)}: evidence can no longer change the decision. Add a comment instead.`
		);
	const before = parseEvidence(claim.evidence);
	const given = Object.fromEntries(
		EVIDENCE_KEYS.filter(
			(k) => patch[k] !== undefined && patch[k] !== null && String(patch[k]).trim() !== ''
		).map((k) => [k, patch[k]])
	);
	const cycleLife =
		claim.kind === 'in-service' &&
		(claim.faultCode === null || needsThroughput(claim.faultCode as ClaimFault));
	const parsed = (cycleLife ? claimEvidenceSchema : faultEvidenceSchema).safeParse({
		...before,
		...given
	});
	if (!parsed.success) {
		const issues = toIssues(parsed.error);
		throw new InvalidInputError(`Check the evidence: ${issues[0].message}`, issues);
	}
	const after: StoredEvidence = {
		...parsed.data,
		throughputScope: patch.throughputScope ?? before.throughputScope,
		log: patch.log ?? before.log ?? null
	};
	const changed = EVIDENCE_KEYS.filter((k) => after[k] !== before[k]);
	if (after.throughputScope !== before.throughputScope && !changed.includes('throughputWh'))
		changed.push('throughputWh');
	const note = patch.comment?.trim() || null;
	if (!changed.length && !patch.log && !note)
		throw new InvalidInputError(
			'Nothing new: fill in at least one evidence field, or write a note.'
		);

	const [mod] = await db
		.select()
		.from(modules)
		.innerJoin(claimModules, eq(claimModules.moduleId, modules.id))
		.where(eq(claimModules.claimId, claim.id))
		.limit(1);
	const [model] = await db
		.select()
		.from(moduleModels)
		.where(eq(moduleModels.id, mod.modules.modelId));
	const implausible = implausibleEvidence(after, {
		model,
		moduleCount: await modulesInSystem(db, claim.systemId),
		startsOn: mod.modules.warrantyStartsOn,
		now,
		calendar: await assemblerCalendar(db)
	});
	if (implausible.length) throw new InvalidInputError(implausible[0].message, implausible);

	const to = stateAfterEvidence(claim.state);
	const what = changed.map(
		(k) =>
			`${EVIDENCE_WORDS[k]} ${k === 'description' || k === 'eventsOutsideLimits' ? 'updated' : `→ ${after[k] === undefined ? 'not given' : fmtNumber(after[k] as number, 2)}`}`
	);
	const comment = [
		`Evidence added${what.length ? `: ${what.join('; ')}` : patch.log ? ': inverter log summary' : ''}.`,
		note
	]
		.filter(Boolean)
		.join(' ');
	await writeTx(db, async (tx) => {
		await setState(tx, claim, { evidence: JSON.stringify(after), state: to }, now);
		await logStep(
			tx,
			actor,
			claim,
			to,
			comment,
			now,
			to !== claim.state ? `Claim ${claim.reference}: evidence added, ${label(to)}` : undefined
		);
		await recordAudit(tx, actor, {
			action: 'claim.evidence',
			entity: 'claim',
			entityId: claim.reference,
			before: { state: claim.state, evidence: before },
			after: { state: to, evidence: after },
			at: now
		});
	});
	if (to !== claim.state || actor.userId !== claim.filedBy) {
		await mailFiler(
			db,
			claim,
			evidenceAdded({ reference: claim.reference, summary: comment, from: claim.state, to })
		);
	}
	return { state: to };
}
