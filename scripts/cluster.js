// Runs the production build as several processes behind one port, one per core by default
// (Node's own node:cluster: the primary process accepts connections and hands them to the
// workers in turn). Each worker is a whole `node build`: the processes keep nothing of their
// own (sessions checked against the database, limits and the outbox in tables, scheduled work
// under a lease), so N workers behave as one server, as N `node build` processes behind a
// reverse proxy do (README, "More than one app server").
//
//   npm run start:cluster                      one worker per core (os.availableParallelism())
//   PACKLEDGER_PROCESSES=3 npm run start:cluster
//
// The same environment as `node build` (PORT, HOST, ORIGIN, DATABASE_URL, AUTH_SECRET, …).
// The first worker starts alone (it applies pending migrations), the others once it listens.
// A worker that dies is started again (more than RESTART_LIMIT deaths in a minute stop the
// whole server with exit code 1: a crash loop is a fault to fix, not to hide). SIGTERM or
// SIGINT stops every worker the way `node build` stops (in-flight requests finish,
// SHUTDOWN_TIMEOUT seconds at most), then the primary; code 0.
import cluster from 'node:cluster';
import { availableParallelism } from 'node:os';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';

const RESTART_LIMIT = 5;

if (cluster.isPrimary) {
	const raw = process.env.PACKLEDGER_PROCESSES ?? '';
	const count = raw.trim() === '' ? availableParallelism() : Number(raw);
	if (!Number.isInteger(count) || count < 1 || count > 64) {
		console.error(
			`PACKLEDGER_PROCESSES is "${raw.slice(0, 40)}": give a whole number of processes from 1 to 64 (or leave it unset for one per core).`
		);
		process.exit(2);
	}
	const rawShutdown = process.env.SHUTDOWN_TIMEOUT ?? '30';
	const shutdownS = Number(rawShutdown);
	if (
		rawShutdown.trim() === '' ||
		!Number.isFinite(shutdownS) ||
		shutdownS < 0 ||
		shutdownS > 3600
	) {
		console.error(
			`SHUTDOWN_TIMEOUT is "${rawShutdown.slice(0, 40)}": give the seconds open requests may take at a stop, from 0 to 3600.`
		);
		process.exit(2);
	}
	let stopping = false;
	const deaths = [];

	const fork = () =>
		new Promise((done) => {
			const worker = cluster.fork();
			worker.once('listening', (address) => {
				console.log(
					`Packledger worker ${worker.process.pid} listening on ${address.address ?? ''}:${address.port}`
				);
				done(worker);
			});
			// A worker that exits before it listens (a failed start) ends the wait too.
			worker.once('exit', () => done(null));
		});

	cluster.on('exit', (worker, code, signal) => {
		if (stopping) return;
		console.error(
			`Packledger worker ${worker.process.pid} ended (${signal ? `signal ${signal}` : `exit code ${code}`}); starting another.`
		);
		const now = Date.now();
		deaths.push(now);
		while (deaths.length && deaths[0] < now - 60_000) deaths.shift();
		if (deaths.length > RESTART_LIMIT) {
			console.error(
				`More than ${RESTART_LIMIT} workers ended within a minute: stopping. Run \`node build\` on its own to see why.`
			);
			stop(1);
			return;
		}
		void fork();
	});

	function stop(exitCode = 0) {
		if (stopping) return;
		stopping = true;
		const workers = Object.values(cluster.workers ?? {});
		if (workers.length === 0) process.exit(exitCode);
		let left = workers.length;
		for (const w of workers) {
			w.once('exit', () => {
				if (--left === 0) process.exit(exitCode);
			});
			w.process.kill('SIGTERM');
		}
		// adapter-node waits SHUTDOWN_TIMEOUT for open requests; a worker still there after it goes.
		setTimeout(
			() => {
				for (const w of Object.values(cluster.workers ?? {})) w.process.kill('SIGKILL');
			},
			(shutdownS + 5) * 1000
		).unref();
	}
	process.on('SIGTERM', () => stop(0));
	process.on('SIGINT', () => stop(0));

	const first = await fork();
	if (!first) {
		console.error('The first Packledger worker did not start: run `node build` to see why.');
		stop(1);
	} else {
		console.log(`Packledger primary ${process.pid}: ${count} worker process(es)`);
		for (let i = 1; i < count && !stopping; i++) await fork();
	}
} else {
	// A worker: the build's own server. Once it has closed (sveltekit:shutdown, after SIGTERM or
	// SIGINT), the channel to the primary is let go, so the worker ends like `node build`.
	process.once('sveltekit:shutdown', () => setImmediate(() => process.disconnect?.()));
	const build = resolve(process.env.PACKLEDGER_BUILD || 'build');
	await import(pathToFileURL(resolve(build, 'index.js')).href);
}
