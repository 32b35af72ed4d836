import { describe, expect, it } from 'vitest';
import { admissionGate, admissionHandle, Gate } from '$lib/server/admission';
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

describe('admission of a request with a body', () => {
	const event = (request: Request) =>
		({ isSubRequest: false, request, url: new URL(request.url) }) as unknown as Parameters<
			typeof admissionHandle
		>[0]['event'];

	it('receives a small body in full before the request queues for a place', async () => {
		const gate = admissionGate();
		const held = Array.from({ length: gate.limit }, () => gate.enter() as { leave(): void });
		let push!: (s: string) => void;
		let end!: () => void;
		const body = new ReadableStream<Uint8Array>({
			start(c) {
				push = (s) => c.enqueue(new TextEncoder().encode(s));
				end = () => c.close();
			}
		});
		const request = new Request('http://register.test/api/design-check', {
			method: 'POST',
			body,
			headers: { 'content-length': '11' },
			duplex: 'half'
		} as RequestInit);
		const answer = admissionHandle({
			event: event(request),
			resolve: async (e) => new Response(await e.request.text())
		});
		await turn();
		// Still receiving: the request waits for its client, not in the queue.
		expect(gate.queued).toBe(0);
		push('hello ');
		push('world');
		end();
		for (let i = 0; i < 5 && gate.queued === 0; i++) await turn();
		expect(gate.queued).toBe(1);
		held[0].leave();
		// The handler reads the whole body, though the gate read a copy of it first.
		expect(await (await answer).text()).toBe('hello world');
		for (const h of held.slice(1)) h.leave();
		expect(gate.active).toBe(0);
	});

	it('lets a large upload in without a place', async () => {
		const gate = admissionGate();
		const held = Array.from({ length: gate.limit }, () => gate.enter() as { leave(): void });
		const request = new Request('http://register.test/api/imports/factory-tests', {
			method: 'POST',
			body: 'x'.repeat(100_000),
			headers: { 'content-length': '100000' }
		});
		const res = await admissionHandle({
			event: event(request),
			resolve: async (e) => new Response(String((await e.request.text()).length))
		});
		expect(await res.text()).toBe('100000');
		expect(gate.active).toBe(gate.limit);
		for (const h of held) h.leave();
	});
});
