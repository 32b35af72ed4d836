/**
 * What the person holding a module must read first: may it be installed, and its condition in
 * one plain sentence. A failed, untested, returned, replaced or scrapped module, or one under
 * an open service campaign, says so before anything else, with "Do not install" where it
 * applies. Pure: the caller passes what the register knows.
 */
import { isInstallable } from './module-lifecycle';

export interface ConditionInput {
	state: string;
	/** The day of the latest factory test (YYYY-MM-DD) and its outcome. */
	lastTest: { on: string; outcome: 'pass' | 'fail' } | null;
	/** True when the module was reworked and waits for its retest. */
	reworked: boolean;
	/** An open service campaign on this module (its step not yet resolved). */
	campaign: { reference: string; title: string; remedy: string } | null;
	/** The module that took this one's place under a claim. */
	replacedBy: string | null;
	scrapped: { on: string; reason: string } | null;
}

export interface Condition {
	installable: boolean;
	/** "Do not install" where it applies, else null. */
	warning: 'Do not install' | null;
	sentence: string;
}

const NOT_INSTALLABLE = 'Do not install' as const;

/** A person's words without their closing full stops, so a sentence can go on after them. */
export function withoutFullStop(text: string): string {
	let s = text.trim();
	while (s.endsWith('.')) s = s.slice(0, -1).trimEnd();
	return s;
}

function byState(i: ConditionInput): Condition {
	const no = (sentence: string): Condition => ({
		installable: false,
		warning: NOT_INSTALLABLE,
		sentence
	});
	switch (i.state) {
		case 'allocated':
			return no('This label belongs to a module that has not been built and tested yet.');
		case 'built':
			return no(
				i.reworked
					? 'This module was reworked and is waiting for its retest at the factory.'
					: 'This module is built and waiting for its factory test.'
			);
		case 'test_failed':
			return no(
				`This module failed its factory test${i.lastTest ? ` on ${i.lastTest.on}` : ''} and is held in the workshop for rework or scrapping.`
			);
		case 'in_stock':
			return {
				installable: true,
				warning: null,
				sentence: `This module passed its factory test${i.lastTest ? ` on ${i.lastTest.on}` : ''} and is in the assembler's stock.`
			};
		case 'shipped':
			return {
				installable: true,
				warning: null,
				sentence: `This module passed its factory test${i.lastTest ? ` on ${i.lastTest.on}` : ''} and is with its dealer, ready to install.`
			};
		case 'installed':
			return {
				installable: false,
				warning: null,
				sentence: 'This module is installed in a system that is not commissioned yet.'
			};
		case 'commissioned':
			return {
				installable: false,
				warning: null,
				sentence: 'This module is in service in a commissioned system.'
			};
		case 'claim_open':
			return no(
				'This module is under a warranty claim: leave it as it is until the assembler has decided, and do not fit it elsewhere.'
			);
		case 'returned':
			return no(
				`This module was taken out of service under a warranty claim${i.replacedBy ? ` and replaced by ${i.replacedBy}` : ''}; it is on its way back to the assembler.`
			);
		case 'received_back':
		case 'inspected':
		case 'kept_for_analysis':
			return no(
				`This module was returned to the assembler under a warranty claim${i.replacedBy ? ` and replaced by ${i.replacedBy}` : ''}.`
			);
		case 'replaced':
			return no(
				`This module was replaced${i.replacedBy ? ` by ${i.replacedBy}` : ''} and is out of service.`
			);
		case 'scrapped':
			return no(
				`This module was scrapped${i.scrapped ? ` on ${i.scrapped.on}: ${withoutFullStop(i.scrapped.reason)}` : ''}. Hand it to a battery recycler under the local rules for damaged or waste batteries.`
			);
		default:
			return no('The register does not say this module may be installed.');
	}
}

/**
 * The module's condition. An open campaign comes first and makes the module not installable
 * until its remedy is done, whatever the state says.
 */
export function conditionOf(i: ConditionInput): Condition {
	const base = byState(i);
	if (base.installable !== isInstallable(i.state))
		throw new Error(`The condition of state ${i.state} disagrees with the lifecycle.`);
	if (!i.campaign) return base;
	const inService = i.state === 'commissioned' || i.state === 'installed';
	return {
		installable: false,
		warning: inService ? null : NOT_INSTALLABLE,
		sentence: `Service campaign ${i.campaign.reference} (“${i.campaign.title}”) is open for this module: ${i.campaign.remedy} ${inService ? 'Contact the dealer for the remedy.' : 'Do not install it until the remedy is done.'} ${base.sentence}`
	};
}
