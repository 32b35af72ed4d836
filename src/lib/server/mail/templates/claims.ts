/**
 * The wording of the e-mails a claim's filer gets, one function per occasion. Services pass the
 * facts; each function returns the subject and the plain-text body. Our own words.
 */
import { CLAIM_STATE_LABELS, type ClaimState } from '$lib/domain/claim-workflow';

export interface Mail {
	subject: string;
	text: string;
}

const label = (s: ClaimState) => CLAIM_STATE_LABELS[s];

/** The claim was received. */
export function claimFiled(p: {
	reference: string;
	fault: string;
	serials: string[];
	targetDays: number;
}): Mail {
	return {
		subject: `Claim ${p.reference} received`,
		text: `We have received warranty claim ${p.reference} (${p.fault}) for:\n${p.serials.map((s) => `  ${s}`).join('\n')}\n\nA warranty officer will review the evidence; we aim to decide within ${p.targetDays} calendar days. Keep the modules in place, isolated if they are unsafe, until we ask for them.`
	};
}

/** An officer moved the claim by hand. */
export function claimMoved(p: {
	reference: string;
	to: ClaimState;
	by: string;
	comment: string | null;
}): Mail {
	const asks =
		p.to === 'awaiting_evidence'
			? '\n\nPlease add the evidence asked for to the claim; it goes back under review as soon as you do.'
			: '';
	return {
		subject: `Claim ${p.reference}: ${label(p.to)}`,
		text: `Claim ${p.reference} is now: ${label(p.to)}.${p.comment ? `\n\n${p.by} writes: ${p.comment}` : ''}${asks}`
	};
}

/** Someone other than the filer commented. */
export function claimComment(p: { reference: string; by: string; text: string }): Mail {
	return {
		subject: `Claim ${p.reference}: a comment`,
		text: `${p.by} commented on claim ${p.reference}:\n\n${p.text}`
	};
}

/** The claim was decided; the assessment's reasons go with it. */
export function claimDecided(p: {
	reference: string;
	to: 'covered' | 'not_covered';
	reason: string | null;
	assessmentReasons: string[];
}): Mail {
	const why = p.reason ? `\n\nThe warranty officer's reason: ${p.reason}` : '';
	const next =
		p.to === 'covered'
			? 'A replacement will follow; we will tell you when it is on its way.'
			: 'The modules are back in service on the register.';
	return {
		subject: `Claim ${p.reference}: ${label(p.to)}`,
		text: `Claim ${p.reference} is decided: ${label(p.to)}. ${next}${why}\n\nThe assessment, point by point:\n${p.assessmentReasons.map((r) => `- ${r}`).join('\n')}`
	};
}

/** Evidence was added (and a claim waiting for it went back under review). */
export function evidenceAdded(p: {
	reference: string;
	summary: string;
	from: ClaimState;
	to: ClaimState;
}): Mail {
	return {
		subject: `Claim ${p.reference}: ${p.to !== p.from ? label(p.to) : 'evidence added'}`,
		text: `${p.summary}\n\nClaim ${p.reference} is ${label(p.to)}.`
	};
}

/** A replacement module was fitted in place of a failed one. */
export function replacementRecorded(p: {
	reference: string;
	failedSerial: string;
	replacementSerial: string;
	where: string;
	warrantyEndsOn: string | null;
	allReplaced: boolean;
	raNumber: string;
}): Mail {
	return {
		subject: `Claim ${p.reference}: ${p.allReplaced ? label('replacement_sent') : `replacement for ${p.failedSerial}`}`,
		text: `${p.failedSerial} is replaced by ${p.replacementSerial} in ${p.where}. The replacement carries the rest of the original warranty${p.warrantyEndsOn ? `, to ${p.warrantyEndsOn}` : ''}.${p.allReplaced ? `\n\nEvery module of claim ${p.reference} now has its replacement.` : ''}\n\nSend the failed module back under return authorisation ${p.raNumber}: write the number on the parcel. Isolate the module and protect its terminals for transport. We write to you when it arrives and again when it is inspected.`
	};
}
