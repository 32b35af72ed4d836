// Benchmark: the reliability computations at the sizes the API accepts, in one process.
// Fits a censored Weibull to 100,000 ages (the API's bound), computes the exact Poisson
// interval at 10,000,000 events (the bound), and summarises a fleet of 100,000 modules
// (rate, fit, reserve by year). Each is timed over several rounds: min / median / max ms.
// Anchor in the same run: one pass of simple-statistics' mean over the same 100,000 ages
// (the least any O(n) computation on them costs).
//
//   npm run bench:reliability [-- --json] [-- --rounds 5]
import { mean } from 'simple-statistics';
import {
	fitWeibull,
	poissonInterval,
	summariseFleet,
	type ServiceRecord
} from '$lib/domain/reliability';

const args = process.argv.slice(2);
const asJson = args.includes('--json');
const rounds = Number(args[args.indexOf('--rounds') + 1] || 5) || 5;
const N = 100_000;

// Deterministic invented ages: Weibull(β 1.3, η 40 years) failures, censored at a service age.
let seed = 42;
const rand = () => (seed = (seed * 1664525 + 1013904223) % 4294967296) / 4294967296;
const times: number[] = [];
const censored: boolean[] = [];
for (let i = 0; i < N; i++) {
	const life = 40 * Math.pow(-Math.log(1 - rand()), 1 / 1.3);
	const age = 0.05 + 12 * rand();
	times.push(Math.min(life, age));
	censored.push(life > age);
}
const day = (d: number) =>
	new Date(Date.UTC(2014, 0, 1) + d * 86_400_000).toISOString().slice(0, 10);
const records: ServiceRecord[] = times.map((t, i) => {
	const start = Math.floor(rand() * 3650);
	const end = start + Math.max(1, Math.round(t * 365.25));
	return {
		inServiceFrom: day(start),
		leftServiceOn: censored[i] ? null : day(end),
		warrantyEndsOn: day(start + 15 * 365),
		claims: censored[i] ? [] : [{ filedOn: day(end), covered: true, decided: true }],
		replacementCost: 1580
	};
});

const time = (f: () => unknown) => {
	const ms: number[] = [];
	for (let r = 0; r < rounds; r++) {
		const t0 = performance.now();
		f();
		ms.push(performance.now() - t0);
	}
	ms.sort((a, b) => a - b);
	return { min: ms[0], median: ms[Math.floor(ms.length / 2)], max: ms[ms.length - 1] };
};

const results = {
	rounds,
	anchorMeanOf100kMs: time(() => mean(times)),
	weibullFit100kMs: time(() => fitWeibull(times, censored)),
	poisson10MEventsMs: time(() => poissonInterval(10_000_000)),
	fleetSummary100kMs: time(() => summariseFleet(records, '2026-12-01'))
};
const fit = fitWeibull(times, censored);
if (!asJson) {
	const f = (x: { min: number; median: number; max: number }) =>
		`${x.min.toFixed(1)} / ${x.median.toFixed(1)} / ${x.max.toFixed(1)} ms`;
	console.log(`rounds: ${rounds}; min / median / max`);
	console.log(`anchor: mean of 100,000 ages        ${f(results.anchorMeanOf100kMs)}`);
	console.log(`Weibull fit, 100,000 ages           ${f(results.weibullFit100kMs)}`);
	console.log(`Poisson interval, 10,000,000 events ${f(results.poisson10MEventsMs)}`);
	console.log(`fleet summary, 100,000 modules      ${f(results.fleetSummary100kMs)}`);
	if (fit.ok)
		console.log(
			`fit check: β ${fit.beta.toFixed(3)} (true 1.3), η ${fit.eta.toFixed(1)} (true 40)`
		);
}
console.log(JSON.stringify({ ...results, fit: fit.ok ? { beta: fit.beta, eta: fit.eta } : null }));
