/**
 * The e-mails a claim's filer gets as a returned module goes through the workshop. Services
 * pass the facts; `sendMail` ends each with the claim's address. Our own words.
 */
import type { ReturnAction } from '$lib/domain/returns';
import type { Mail } from './claims';

const HEADLINE: Record<ReturnAction, string> = {
	receive: 'received at our workshop',
	inspect: 'inspected',
	rework: 'reworked',
	keep: 'kept for analysis',
	scrap: 'scrapped'
};

const NEXT: Record<ReturnAction, string> = {
	receive: 'We inspect it next and write to you with what we find.',
	inspect: 'We now decide whether it is reworked, kept for analysis or scrapped.',
	rework: 'It is retested before it is used again. Nothing more is needed from you.',
	keep: 'We keep it to analyse the failure. Nothing more is needed from you.',
	scrap: 'It goes for recycling as waste. Nothing more is needed from you.'
};

/** A step of a return: what happened to the module, and what comes next. */
export function returnStepMail(p: {
	action: ReturnAction;
	serial: string;
	raNumber: string;
	claimReference: string;
	summary: string;
}): Mail {
	return {
		subject: `Return ${p.raNumber} (claim ${p.claimReference}): ${p.serial} ${HEADLINE[p.action]}`,
		text: `${p.summary}\n\n${NEXT[p.action]}`
	};
}
