import type { Handle } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import { places, type Place } from './admission-place';

/**
 * Admission in arrival order. A Node server takes every request it is sent at once; under
 * more load than one event loop can serve, hundreds of requests then share it step by step
 * (processor sharing): each step of each request waits behind a step of every other, so a
 * request with more steps (an import waiting for its writer thread several times) takes many
 * times longer than one with few, a writer thread's answers wait behind every read in
 * flight, and the slowest requests run into clients' timeouts while the median stays low.
 * A gate lets a few requests at a time into the application and queues the rest first come,
 * first served, so every request waits about as long as the queue ahead of it, and the
 * requests inside finish quickly (a queueing-theory commonplace: FIFO admission bounds the
 * spread of waiting times that processor sharing widens; Harchol-Balter, "Performance
 * Modeling and Design of Computer Systems", 2013, ch. 22–24, from memory).
 *
 * A request about to wait for the database's one writer (`withWriteLock`) gives its place up
 * to the next in line, so the queue never stalls behind writes waiting their turn; it then
 * runs as the writer without a place, which is one more request inside at most. Requests
 * SvelteKit makes to itself while rendering a page (`event.isSubRequest`) pass: their outer
 * request already holds a place, and queueing them behind it could wait for ever. A
 * request's body is received before it takes a place (below). A full queue answers 503 with
 * `Retry-After` at once, so memory stays bounded however many clients come; a request whose
 * client went away while it waited leaves the queue unserved.
 */
export class Gate {
	#active = 0;
	#queue: (() => void)[] = [];
	#head = 0;

	constructor(
		readonly limit: number,
		readonly maxQueued: number
	) {}

	get active() {
		return this.#active;
	}
	get queued() {
		return this.#queue.length - this.#head;
	}

	/**
	 * A place inside (to `leave()` once done, or earlier), at once or when the callers ahead have
	 * left; null when the queue is full.
	 */
	enter(): Place | Promise<Place> | null {
		if (this.#active < this.limit && this.queued === 0) {
			this.#active++;
			return this.#place();
		}
		if (this.queued >= this.maxQueued) return null;
		return new Promise<Place>((resolve) => this.#queue.push(() => resolve(this.#place())));
	}

	#place(): Place {
		let held = true;
		return {
			leave: () => {
				if (!held) return;
				held = false;
				this.#pass();
			}
		};
	}

	/** Gives a place that was left to the longest waiting caller, if any. */
	#pass() {
		if (this.queued > 0) {
			const next = this.#queue[this.#head];
			this.#queue[this.#head++] = NOOP;
			// The array is compacted now and then, so a long run does not keep old slots.
			if (this.#head > 1024 && this.#head * 2 > this.#queue.length) {
				this.#queue = this.#queue.slice(this.#head);
				this.#head = 0;
			}
			// The place passes on (`active` stays the same) at the event loop's next turn, not
			// at once: requests here run to their end within one turn when the database
			// answers synchronously, so a hand-over at once would serve the whole queue in one
			// turn and hold the loop (a writer thread's answers and new connections waiting).
			setImmediate(next);
			return;
		}
		this.#active--;
	}
}

const NOOP = () => {};

const setting = (value: string | undefined, fallback: number, max: number) => {
	const n = Number(value);
	return Number.isInteger(n) && n >= 1 && n <= max ? n : fallback;
};

let gate: Gate | null = null;

/**
 * The process's gate: PACKLEDGER_ADMIT places (default 4) and a queue of up to
 * PACKLEDGER_ADMIT_QUEUE requests (default 2,000).
 */
export function admissionGate(): Gate {
	gate ??= new Gate(
		setting(env.PACKLEDGER_ADMIT, 4, 1000),
		setting(env.PACKLEDGER_ADMIT_QUEUE, 2000, 100_000)
	);
	return gate;
}

const busy = (api: boolean) =>
	new Response(
		api
			? JSON.stringify({
					error: 'The register is busy with other requests. Try again in a few seconds.'
				})
			: 'The register is busy with other requests. Try again in a few seconds.',
		{
			status: 503,
			headers: {
				'content-type': api ? 'application/json' : 'text/plain; charset=utf-8',
				'retry-after': '5'
			}
		}
	);

/** Largest body received before the request takes a place; a larger one goes in without one. */
const RECEIVE_FIRST_BYTES = 64 * 1024;

export const admissionHandle: Handle = async ({ event, resolve }) => {
	if (event.isSubRequest || env.PACKLEDGER_ADMIT === 'off') return resolve(event);
	if (event.request.body !== null) {
		// A place is for work, not for waiting on a client: a small body is received in full
		// first (a slow sender holds no place), through a clone, so the request keeps its own
		// body, now buffered (Fetch standard, Request.clone tees the body). A large upload or one
		// of unknown length (rig files, photos) is let in without a place, as before the gate:
		// receiving it twice in memory would cost more than it saves, and uploads are few.
		const declared = Number(event.request.headers.get('content-length') ?? NaN);
		if (!(declared >= 0 && declared <= RECEIVE_FIRST_BYTES)) return resolve(event);
		// A failed read (the client went away) fails the same way when the handler reads.
		await event.request
			.clone()
			.arrayBuffer()
			.catch(() => undefined);
	}
	const entered = admissionGate().enter();
	if (entered === null) return busy(event.url.pathname.startsWith('/api/'));
	const place = entered instanceof Promise ? await entered : entered;
	try {
		// The client gave up while this request waited: nobody is left to answer.
		if (event.request.signal.aborted) return new Response(null, { status: 499 });
		return await places.run(place, () => resolve(event));
	} finally {
		place.leave();
	}
};
