/**
 * Recording a commissioning attempt: the checklist is judged and stored whatever the outcome;
 * a pass numbers the certificate, commissions the system and its modules, starts each
 * module's warranty, and sends the certificate.
 */
import { and, asc, eq, inArray } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx, type TxHook } from '$lib/server/db';
import { attachments, commissionings, modules, systems } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { ConflictError, InvalidInputError } from '$lib/server/errors';
import { evaluateCommissioning, type CommissioningItem } from '$lib/domain/commissioning';
import { warrantyTermEnd } from '$lib/domain/warranty';
import { STATE_LABELS } from '$lib/module-states';
import { toMeasurements, type CommissioningInput } from '$lib/schemas/commissioning';
import { recordAudit, recordEvent } from './audit';
import { businessDay } from './calendar';
import { nextYearlyReference } from './sequences';
import { canonicalContent, sha256Hex } from './certificate-verification';
import { mailCertificate, type CertificateMail } from './certificate-mail';
import { organisationName, type Snapshot } from './certificates';
import { loadSystemForCommissioning } from './commissioning';
import { warrantyTermsOf } from '$lib/domain/model';
import { endOf, mayMove, statesFrom } from '$lib/domain/module-lifecycle';

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
	now = new Date(),
	/** Run inside this use case's own write transaction (the sync endpoint records its operation so). */
	hook?: TxHook
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

	const saved = await writeTx(
		db,
		async (tx) => {
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
		},
		hook
	);

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
