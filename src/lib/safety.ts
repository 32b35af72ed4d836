/**
 * The safety cautions the register shows wherever its pages lead someone to work on a battery
 * system, in one place: the commissioning checklist, a system's page, filing a claim, handling
 * a returned module, a module's public record, its passport and the service-notice e-mail all
 * say the same thing in the same words. Common practice for work on DC battery systems (the
 * points every installer's training covers); local codes and licensed practice prevail, and
 * the last caution says so. Safe for the browser and the server (PDF certificate, e-mail).
 */

export interface Caution {
	id: 'isolate' | 'ppe' | 'arc' | 'polarity' | 'electrician' | 'codes' | 'damaged';
	title: string;
	text: string;
}

/** The usual cautions before any work on a battery system, in the order work meets them. */
export const CAUTIONS: readonly Caution[] = [
	{
		id: 'isolate',
		title: 'Isolate and lock off',
		text: 'Open every battery and inverter isolator, lock and tag them off, and prove the circuit dead before you touch a conductor.'
	},
	{
		id: 'ppe',
		title: 'Insulated tools and suitable PPE',
		text: 'Use insulated tools, take off rings and watches, and wear eye protection and insulating gloves rated for the voltage.'
	},
	{
		id: 'arc',
		title: 'DC arc and short-circuit hazard',
		text: 'A battery is always live: a short circuit delivers very high currents at up to several hundred volts DC, and a DC arc does not go out by itself. Keep terminals covered until you connect them.'
	},
	{
		id: 'polarity',
		title: 'Polarity',
		text: 'Check the polarity of every connection before closing an isolator; reversed polarity can destroy the inverter and the protective devices.'
	},
	{
		id: 'electrician',
		title: 'Work by a licensed electrician',
		text: 'Installation, commissioning and removal are done by a licensed electrician.'
	},
	{
		id: 'codes',
		title: 'Local codes take precedence',
		text: 'Local electrical codes and installation standards take precedence over anything the application computes.'
	}
];

/** Added where a module is removed, returned or packed. */
export const DAMAGED_MODULE: Caution = {
	id: 'damaged',
	title: 'A failed, damaged, swollen or hot module',
	text: 'Treat it as live and cover its terminals. A damaged, swollen, hot or leaking lithium module can vent flammable gas or ignite, even hours later: keep clear, ventilate, quarantine it away from anything that burns, do not open or charge it, and follow the local rules for storing and transporting damaged batteries.'
};

export const CODES_TAKE_PRECEDENCE = CAUTIONS.find((c) => c.id === 'codes')!.text;

/** The cautions in one paragraph, for a public record, a passport and e-mails. */
export const CAUTIONS_IN_BRIEF =
	'Work on a battery system only isolated and locked off, with insulated tools and suitable PPE: ' +
	'the DC arc and short-circuit currents can injure. Check polarity before every connection. ' +
	'Installation, commissioning and removal are for a licensed electrician; local electrical codes ' +
	'and installation standards take precedence.';

/**
 * Before any insulation test on a battery circuit (common practice): it cannot be made dead,
 * and the test voltage destroys or falsifies through electronics and surge protection.
 */
export const INSULATION_TEST_PRECAUTIONS: readonly string[] = [
	'A battery circuit cannot be made dead: its conductors stay live against each other while the test runs, so test each pole against earth with the battery isolator open.',
	'Disconnect the inverter, battery management electronics and surge protective devices before the test: the test voltage can destroy them, and they falsify the reading.'
];
