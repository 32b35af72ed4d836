/**
 * The one source of safety cautions names the usual points of work on DC battery systems
 * (common practice, as installer training and the brief's list give them: isolate and lock
 * off, insulated tools and PPE, DC arc hazard, polarity, licensed electrician) and defers to
 * local codes — in the full list and in the one-paragraph form alike.
 */
import { describe, expect, it } from 'vitest';
import { CAUTIONS, CAUTIONS_IN_BRIEF, CODES_TAKE_PRECEDENCE } from '$lib/safety';

const POINTS = [
	/lock(ed)? off/i,
	/insulated tools/i,
	/PPE/,
	/DC arc/i,
	/polarity/i,
	/licensed electrician/i,
	/local electrical codes/i
];

describe('safety cautions', () => {
	it('the full list names every usual point', () => {
		const all = CAUTIONS.map((c) => `${c.title}. ${c.text}`).join(' ');
		for (const p of POINTS) expect(all).toMatch(p);
	});
	it('the brief form names every usual point too', () => {
		for (const p of POINTS) expect(CAUTIONS_IN_BRIEF).toMatch(p);
	});
	it('the last caution defers to local codes', () => {
		expect(CAUTIONS.at(-1)!.text).toBe(CODES_TAKE_PRECEDENCE);
	});
});
