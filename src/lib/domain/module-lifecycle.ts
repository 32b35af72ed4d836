/**
 * A module's life: its states and the moves between them, defined once. The database column
 * (`modules.state`), the services' SQL state lists and the pages' predicates all read this
 * table. Pure: no database, no clock.
 *
 * Adding a state or a move (rework, scrap, a return to stock …): add the state to
 * MODULE_STATES (and its words to `$lib/module-states`), add a line to MODULE_MOVES naming
 * the states it starts from and the states it may end in, and use `assertTransition` /
 * `statesFrom` in the service that makes the move. A new state needs a migration of the
 * column's check only if the database enforces one (SQLite text enums are not enforced).
 */

export const MODULE_STATES = [
	'allocated',
	'built',
	'test_failed',
	'in_stock',
	'shipped',
	'installed',
	'commissioned',
	'claim_open',
	'returned',
	'received_back',
	'inspected',
	'kept_for_analysis',
	'replaced',
	'scrapped'
] as const;
export type ModuleState = (typeof MODULE_STATES)[number];

interface Move {
	from: readonly ModuleState[];
	to: readonly ModuleState[];
	/** What the move is, in words, for messages. */
	words: string;
}

/** Every move a module can make, by name. A move may end in more than one state. */
export const MODULE_MOVES = {
	/** Registered at the build bench. */
	build: { from: ['allocated'], to: ['built'], words: 'build' },
	/** A factory test result arrives (a re-test replaces the last result while still here). */
	factoryTest: {
		from: ['built', 'in_stock', 'test_failed'],
		to: ['in_stock', 'test_failed'],
		words: 'factory test'
	},
	/** Dispatched to a dealer on a shipment. */
	ship: { from: ['in_stock'], to: ['shipped'], words: 'shipment' },
	/** Placed in a system's slot (our own sites from stock, a dealer's sites from its shipments). */
	install: { from: ['in_stock', 'shipped'], to: ['installed'], words: 'installation' },
	/** Taken out of a system that is not commissioned yet: back to stock or to the dealer. */
	uninstall: { from: ['installed'], to: ['in_stock', 'shipped'], words: 'removal' },
	/** The system's commissioning passed. */
	commission: { from: ['installed'], to: ['commissioned'], words: 'commissioning' },
	/** A warranty claim names the module. */
	openClaim: { from: ['commissioned'], to: ['claim_open'], words: 'claim' },
	/** The claim was decided not covered: the module is back in service. */
	declineClaim: { from: ['claim_open'], to: ['commissioned'], words: 'claim decision' },
	/** Fitted in place of a failed module of a covered claim: in service at once. */
	fitAsReplacement: {
		from: ['in_stock', 'shipped'],
		to: ['commissioned'],
		words: 'replacement'
	},
	/** The failed module of a covered claim comes out and travels back ("on its way back"). */
	returnFailed: { from: ['claim_open'], to: ['returned'], words: 'return' },
	/** A dealer claims damage or failure on delivery for a module shipped to it, not yet installed. */
	claimOnDelivery: { from: ['shipped'], to: ['claim_open'], words: 'claim on delivery' },
	/** A claim on delivery decided not covered: the module is the dealer's stock again. */
	declineDeliveryClaim: { from: ['claim_open'], to: ['shipped'], words: 'claim decision' },
	/** A replacement for a claim on delivery goes to the dealer from our stock. */
	sendAsReplacement: { from: ['in_stock'], to: ['shipped'], words: 'replacement' },
	/** The workshop scans the returned module in, with its condition on arrival. */
	receiveReturn: { from: ['returned'], to: ['received_back'], words: 'receipt of a return' },
	/** The received module is inspected once: findings and cause. */
	inspectReturn: { from: ['received_back'], to: ['inspected'], words: 'return inspection' },
	/** An inspected module is kept for failure analysis. */
	keepForAnalysis: {
		from: ['inspected'],
		to: ['kept_for_analysis'],
		words: 'keeping for analysis'
	},
	/** Work on a failed or inspected module; it goes back to built and must pass a retest. */
	rework: {
		from: ['test_failed', 'inspected', 'kept_for_analysis'],
		to: ['built'],
		words: 'rework'
	},
	/**
	 * Scrapped: only in the workshop (never a module in service, at a dealer or under claim),
	 * so nobody scraps a module someone still relies on.
	 */
	scrap: {
		from: ['built', 'test_failed', 'in_stock', 'inspected', 'kept_for_analysis'],
		to: ['scrapped'],
		words: 'scrapping'
	},
	/** A build registered wrongly is corrected (cells, checks, notes); the state stays. */
	correctBuild: {
		from: ['built', 'test_failed', 'in_stock'],
		to: ['built', 'test_failed', 'in_stock'],
		words: 'build correction'
	}
} as const satisfies Record<string, Move>;
export type ModuleMove = keyof typeof MODULE_MOVES;

/** A move the lifecycle does not allow (services answer it as a conflict). */
export class TransitionError extends Error {
	readonly status = 409;
	constructor(message: string) {
		super(message);
		this.name = 'TransitionError';
	}
}

/** The states a move may start from. */
export function statesFrom(move: ModuleMove): readonly ModuleState[] {
	return MODULE_MOVES[move].from;
}

type SingleEnd = {
	[K in ModuleMove]: (typeof MODULE_MOVES)[K]['to'] extends readonly [unknown] ? K : never;
}[ModuleMove];

/** The state a move with one end leaves a module in. */
export function endOf<M extends SingleEnd>(move: M): (typeof MODULE_MOVES)[M]['to'][0] {
	return MODULE_MOVES[move].to[0];
}

/** Whether a module in `state` may make the move. */
export function mayMove(state: string, move: ModuleMove): boolean {
	return (MODULE_MOVES[move].from as readonly string[]).includes(state);
}

/** Whether the move from `from` to `to` is one the lifecycle allows. */
export function isTransition(from: string, move: ModuleMove, to: string): boolean {
	return mayMove(from, move) && (MODULE_MOVES[move].to as readonly string[]).includes(to);
}

/** Throws a TransitionError saying what is wrong unless the move is allowed. */
export function assertTransition(from: string, move: ModuleMove, to: string): void {
	const m = MODULE_MOVES[move];
	if (!mayMove(from, move))
		throw new TransitionError(
			`A module in state ${from} cannot have a ${m.words}: only one in ${m.from.join(' or ')} can.`
		);
	if (!(m.to as readonly string[]).includes(to))
		throw new TransitionError(`A ${m.words} ends in ${m.to.join(' or ')}, not ${to}.`);
}

/** Every state a move can reach from `state`, with the move's name. */
export function movesFrom(state: string): { move: ModuleMove; to: readonly ModuleState[] }[] {
	return (Object.keys(MODULE_MOVES) as ModuleMove[])
		.filter((move) => mayMove(state, move))
		.map((move) => ({ move, to: MODULE_MOVES[move].to }));
}

/** Still in the workshop: may receive (re)test results. */
export const mayBeTested = (state: string) => mayMove(state, 'factoryTest');
/** Passed its factory test and not yet dispatched. */
export const mayBeShipped = (state: string) => mayMove(state, 'ship');
/** In stock or at a dealer: may go into a system (the site's dealer decides which). */
export const mayBeInstalled = (state: string) => mayMove(state, 'install');
/** In service: a claim may name it. */
export const mayBeClaimed = (state: string) => mayMove(state, 'openClaim');
/** May stand in for a failed module of a covered claim. */
export const mayReplace = (state: string) => mayMove(state, 'fitAsReplacement');
/** Shipped to a dealer and not installed: a claim on delivery may name it. */
export const mayBeClaimedOnDelivery = (state: string) => mayMove(state, 'claimOnDelivery');
/** In the workshop after a failure: may be reworked. */
export const mayBeReworked = (state: string) => mayMove(state, 'rework');
/** In the workshop and not in anyone's service: may be scrapped. */
export const mayBeScrapped = (state: string) => mayMove(state, 'scrap');

/**
 * Whether a module in this state may go into a system. Only a module that passed its factory
 * test and is not held back by a return, a claim or a scrapping is installable.
 */
export const isInstallable = (state: string) => mayBeInstalled(state);

/**
 * A list of states for a raw SQL `IN (…)`: the states are this file's constants, checked to be
 * plain lower-case words, so the text is safe to splice.
 */
export function sqlStateList(states: readonly ModuleState[]): string {
	if (!states.length) throw new Error('An empty state list matches nothing.');
	for (const s of states)
		if (!/^[a-z_]{1,40}$/.test(s)) throw new Error(`Not a module state: ${s}`);
	return states.map((s) => `'${s}'`).join(', ');
}

/** Where a module goes when taken out of an uncommissioned system: its dealer's, or our stock. */
export function stateAfterRemoval(dealerOrgId: number | null): 'in_stock' | 'shipped' {
	return dealerOrgId === null ? 'in_stock' : 'shipped';
}
