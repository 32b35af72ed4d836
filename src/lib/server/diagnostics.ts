import { monitorEventLoopDelay, type IntervalHistogram } from 'node:perf_hooks';
import { env } from '$env/dynamic/private';
import { NotFoundError } from '$lib/server/errors';

/**
 * The server's own event-loop delay (Node's `perf_hooks.monitorEventLoopDelay`: a 10 ms timer
 * whose lateness is recorded in a histogram), for benchmarks. Off unless the server runs with
 * PACKLEDGER_DIAGNOSTICS=1; the first reading starts the monitor.
 */
let histogram: IntervalHistogram | null = null;

export interface EventLoopDelay {
	/** Longest delay seen since the last reset, ms: the longest the loop was held. */
	maxMs: number;
	p99Ms: number;
	meanMs: number;
	/** Timer turns measured. */
	samples: number;
	/** Since when (epoch ms). */
	sinceMs: number;
}

let since = 0;

export function eventLoopDelay(reset: boolean, now = Date.now()): EventLoopDelay {
	if (env.PACKLEDGER_DIAGNOSTICS !== '1')
		throw new NotFoundError('Diagnostics are off: start the server with PACKLEDGER_DIAGNOSTICS=1.');
	if (!histogram) {
		histogram = monitorEventLoopDelay({ resolution: 10 });
		histogram.enable();
		since = now;
	}
	const ms = (ns: number) => Math.round(ns / 1e4) / 100;
	const reading = {
		maxMs: histogram.count ? ms(histogram.max) : 0,
		p99Ms: histogram.count ? ms(histogram.percentile(99)) : 0,
		meanMs: histogram.count ? ms(histogram.mean) : 0,
		samples: histogram.count,
		sinceMs: since
	};
	if (reset) {
		histogram.reset();
		since = now;
	}
	return reading;
}
