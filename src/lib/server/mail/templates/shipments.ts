/**
 * The wording of the e-mail a dealer gets when a shipment leaves the workshop. The service
 * passes the facts; this returns the subject and the plain-text body. Our own words.
 */
import type { Mail } from './claims';

const plural = (n: number, one: string) => `${n} ${n === 1 ? one : `${one}s`}`;

/** A shipment was dispatched: the list of serials to check on arrival, and what to do with damage. */
export function shipmentDispatched(p: {
	reference: string;
	/** The assembler's name. */
	from: string;
	dealer: string;
	/** The business day of the dispatch, on the assembler's calendar. */
	day: string;
	items: { serial: string; modelCode: string; modelName: string }[];
	note: string | null;
}): Mail {
	const width = Math.max(...p.items.map((i) => i.serial.length));
	return {
		subject: `Shipment ${p.reference} from ${p.from}: ${plural(p.items.length, 'module')}`,
		text:
			`Hello ${p.dealer},\n\n${p.from} dispatched shipment ${p.reference} to you on ${p.day} with ${plural(p.items.length, 'module')}:\n\n` +
			p.items.map((i) => `${i.serial.padEnd(width)}  ${i.modelCode}  ${i.modelName}`).join('\n') +
			(p.note ? `\n\nNote: ${p.note}` : '') +
			`\n\nPlease check each serial against this list when the shipment arrives and tell us at once if anything is missing or damaged.` +
			`\nA damaged battery module must not be installed; keep it apart and ask us how to return it under the dangerous-goods rules that apply.\n`
	};
}
