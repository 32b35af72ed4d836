import { describe, expect, it } from 'vitest';
import { Gate } from '$lib/server/admission';
import { leavePlace, places } from '$lib/server/admission-place';
import { openDb, withWriteLock } from '$lib/server/db/client';

const turn = () => new Promise<void>((r) => setImmediate(r));

/**
 * The admission gate is first come, first served with a fixed number of places (a FIFO queue
 * with c servers, the M/M/c discipline of queueing theory: Kleinrock, "Queueing Systems",
 * vol. 1, 1975, ch. 3, from memory): these tests check the discipline itself, by order.
 */
describe('admission gate', () => {
	it('lets `limit` callers in at once and the rest in arrival order', async () => {
		const gate = new Gate(2, 10);
		const order: number[] = [];
		const a = gate.enter();
		const b = gate.enter();
		expect(a).not.toBeInstanceOf(Promise);
		expect(b).not.toBeInstanceOf(Promise);
		expect(gate.active).toBe(2);
		const waiting = [1, 2, 3].map((n) =>
			Promise.resolve(gate.enter()).then((p) => {
				order.push(n);
				return p!;
			})
		);
		expect(gate.queued).toBe(3);
		(a as { leave(): void }).leave();
		await turn();
		await turn();
		expect(order).toEqual([1]);
		(b as { leave(): void }).leave();
		(await waiting[0]).leave();
		await turn();
		await turn();
		expect(order).toEqual([1, 2, 3]);
		expect(gate.active).toBe(2);
		(await waiting[1]).leave();
		(await waiting[2]).leave();
		expect(gate.active).toBe(0);
		expect(gate.queued).toBe(0);
	});

	it('refuses at once when the queue is full, and a place left twice counts once', () => {
		const gate = new Gate(1, 2);
		const p = gate.enter() as { leave(): void };
		expect(gate.enter()).toBeInstanceOf(Promise);
		expect(gate.enter()).toBeInstanceOf(Promise);
		expect(gate.enter()).toBeNull();
		expect(gate.queued).toBe(2);
		p.leave();
		p.leave();
		expect(gate.active).toBe(1); // the place went to the first in line, once
	});

	it('hands a place on at the next turn of the event loop, not within the same one', async () => {
		const gate = new Gate(1, 10);
		const p = gate.enter() as { leave(): void };
		let admitted = false;
		void Promise.resolve(gate.enter()).then(() => (admitted = true));
		p.leave();
		await Promise.resolve();
		await Promise.resolve();
		expect(admitted).toBe(false);
		await turn();
		await turn();
		expect(admitted).toBe(true);
	});

	it('gives the place up while a request waits for the write lock held by another', async () => {
		const db = await openDb(':memory:');
		const gate = new Gate(1, 10);
		let release!: () => void;
		const holder = withWriteLock(db, () => new Promise<void>((r) => (release = r)));
		const place = gate.enter() as { leave(): void };
		const writer = places.run(place, () => withWriteLock(db, async () => 'written'));
		// The place was given up: the next caller is let in at once while the writer waits.
		const next = gate.enter();
		expect(next).not.toBeInstanceOf(Promise);
		expect(next).not.toBeNull();
		expect(gate.active).toBe(1);
		// Uncontended, a writer keeps its place.
		const free = await openDb(':memory:');
		const gate2 = new Gate(1, 10);
		const own = gate2.enter() as { leave(): void };
		await places.run(own, () => withWriteLock(free, async () => undefined));
		expect(gate2.enter()).toBeInstanceOf(Promise);
		release();
		await holder;
		await expect(writer).resolves.toBe('written');
		// Outside any request, giving a place up does nothing.
		expect(() => leavePlace()).not.toThrow();
	});
});
