/**
 * The module's life against the product description's account of it ("The module's life":
 * label printed → built → factory test pass or fail → in stock → shipped to a dealer →
 * installed → commissioned → under claim → replaced and returned). The expected moves are
 * written out here by hand from that account, not read from the table under test.
 */
import { describe, expect, it } from 'vitest';
import {
	assertTransition,
	endOf,
	isInstallable,
	isTransition,
	mayBeClaimed,
	mayBeClaimedOnDelivery,
	mayBeReworked,
	mayBeScrapped,
	mayBeInstalled,
	mayBeShipped,
	mayBeTested,
	mayMove,
	mayReplace,
	MODULE_MOVES,
	MODULE_STATES,
	movesFrom,
	sqlStateList,
	stateAfterRemoval,
	statesFrom,
	TransitionError
} from '../../src/lib/domain/module-lifecycle';
import { MODULE_STATES as DB_STATES } from '../../src/lib/server/db/schema';
import { STATE_LABELS } from '../../src/lib/module-states';

/** [from, move, to] that must be allowed. */
const ALLOWED: [string, string, string][] = [
	['allocated', 'build', 'built'],
	['built', 'factoryTest', 'in_stock'],
	['built', 'factoryTest', 'test_failed'],
	['test_failed', 'factoryTest', 'in_stock'], // a re-test after rework on the bench
	['in_stock', 'factoryTest', 'test_failed'], // a re-test before shipping replaces the result
	['in_stock', 'factoryTest', 'in_stock'],
	['test_failed', 'factoryTest', 'test_failed'],
	['in_stock', 'ship', 'shipped'],
	['in_stock', 'install', 'installed'], // our own sites take modules from stock
	['shipped', 'install', 'installed'],
	['installed', 'uninstall', 'in_stock'],
	['installed', 'uninstall', 'shipped'],
	['installed', 'commission', 'commissioned'],
	['commissioned', 'openClaim', 'claim_open'],
	['claim_open', 'declineClaim', 'commissioned'],
	['in_stock', 'fitAsReplacement', 'commissioned'],
	['shipped', 'fitAsReplacement', 'commissioned'],
	['claim_open', 'returnFailed', 'returned'],
	// Claims on delivery: a module shipped to the dealer and not installed.
	['shipped', 'claimOnDelivery', 'claim_open'],
	['claim_open', 'declineDeliveryClaim', 'shipped'],
	['in_stock', 'sendAsReplacement', 'shipped'],
	// Returns: on its way back → received → inspected once → reworked, kept or scrapped.
	['returned', 'receiveReturn', 'received_back'],
	['received_back', 'inspectReturn', 'inspected'],
	['inspected', 'keepForAnalysis', 'kept_for_analysis'],
	// Rework sends a failed or inspected module back to built, to be retested.
	['test_failed', 'rework', 'built'],
	['inspected', 'rework', 'built'],
	['kept_for_analysis', 'rework', 'built'],
	// Scrapping only in the workshop, never from service, a dealer or a claim.
	['built', 'scrap', 'scrapped'],
	['test_failed', 'scrap', 'scrapped'],
	['in_stock', 'scrap', 'scrapped'],
	['inspected', 'scrap', 'scrapped'],
	['kept_for_analysis', 'scrap', 'scrapped'],
	// Correcting a wrongly registered build keeps the state (any of the workshop's three).
	...(['built', 'test_failed', 'in_stock'] as const).flatMap((f) =>
		(['built', 'test_failed', 'in_stock'] as const).map(
			(t) => [f, 'correctBuild', t] as [string, string, string]
		)
	)
];

describe('module lifecycle', () => {
	it('is the one enumeration the database column uses', () => {
		expect(DB_STATES).toBe(MODULE_STATES);
	});

	it('has words for every state', () => {
		expect(MODULE_STATES.filter((s) => !STATE_LABELS[s])).toEqual([]);
	});

	it('allows exactly the moves of the described life', () => {
		const table = Object.entries(MODULE_MOVES).flatMap(([move, m]) =>
			m.from.flatMap((from) => m.to.map((to) => `${from} -${move}-> ${to}`))
		);
		expect(table.sort()).toEqual(ALLOWED.map(([f, m, t]) => `${f} -${m}-> ${t}`).sort());
		for (const [from, move, to] of ALLOWED)
			expect(isTransition(from, move as keyof typeof MODULE_MOVES, to)).toBe(true);
	});

	it('refuses what the life does not allow, saying what would be needed', () => {
		expect(() => assertTransition('allocated', 'ship', 'shipped')).toThrow(TransitionError);
		expect(() => assertTransition('test_failed', 'ship', 'shipped')).toThrow(
			/state test_failed cannot have a shipment: only one in in_stock can/
		);
		expect(() => assertTransition('built', 'install', 'installed')).toThrow(TransitionError);
		expect(() => assertTransition('commissioned', 'uninstall', 'in_stock')).toThrow(
			TransitionError
		);
		expect(() => assertTransition('in_stock', 'ship', 'installed')).toThrow(
			/ends in shipped, not installed/
		);
		expect(() => assertTransition('in_stock', 'ship', 'shipped')).not.toThrow();
		expect(new TransitionError('x').status).toBe(409);
	});

	it('answers the predicates for every state', () => {
		const where = (p: (s: string) => boolean) => MODULE_STATES.filter(p);
		expect(where(mayBeTested)).toEqual(['built', 'test_failed', 'in_stock']);
		expect(where(mayBeShipped)).toEqual(['in_stock']);
		expect(where(mayBeInstalled)).toEqual(['in_stock', 'shipped']);
		expect(where(mayBeClaimed)).toEqual(['commissioned']);
		expect(where(mayReplace)).toEqual(['in_stock', 'shipped']);
		expect(where(mayBeClaimedOnDelivery)).toEqual(['shipped']);
		expect(where(mayBeReworked)).toEqual(['test_failed', 'inspected', 'kept_for_analysis']);
		expect(where(mayBeScrapped)).toEqual([
			'built',
			'test_failed',
			'in_stock',
			'inspected',
			'kept_for_analysis'
		]);
		expect(where(isInstallable)).toEqual(['in_stock', 'shipped']);
		expect(mayMove('no-such-state', 'build')).toBe(false);
	});

	it('never scraps a module in service, at a dealer, under claim or on its way back', () => {
		for (const s of [
			'shipped',
			'installed',
			'commissioned',
			'claim_open',
			'returned',
			'received_back'
		])
			expect(() => assertTransition(s, 'scrap', 'scrapped')).toThrow(TransitionError);
	});

	it('has dead ends where the life ends', () => {
		for (const s of ['replaced', 'scrapped']) expect(movesFrom(s)).toEqual([]);
		expect(movesFrom('returned').map((m) => m.move)).toEqual(['receiveReturn']);
		expect(movesFrom('installed').map((m) => m.move)).toEqual(['uninstall', 'commission']);
	});

	it('gives the single end of a move and where a removed module goes', () => {
		expect(endOf('build')).toBe('built');
		expect(endOf('ship')).toBe('shipped');
		expect(endOf('returnFailed')).toBe('returned');
		expect(stateAfterRemoval(null)).toBe('in_stock');
		expect(stateAfterRemoval(7)).toBe('shipped');
		expect(statesFrom('factoryTest')).toEqual(['built', 'in_stock', 'test_failed']);
	});

	it('builds a SQL state list only from plain state words', () => {
		expect(sqlStateList(statesFrom('factoryTest'))).toBe("'built', 'in_stock', 'test_failed'");
		expect(() => sqlStateList([])).toThrow();
		expect(() => sqlStateList(["x'); DROP TABLE modules; --" as 'built'])).toThrow(
			/Not a module state/
		);
	});
});
