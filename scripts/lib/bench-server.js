// Starts the production build on a throwaway database for a benchmark and signs a user in.
// Every benchmark passes its own port (127.0.0.1 only); BENCH_PORT overrides the default.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';

export async function startBenchServer({
	port = Number(process.env.BENCH_PORT ?? 4171),
	dbDir = 'data/bench',
	seed = true,
	keep = false,
	env: extra = {},
	processes = 0
} = {}) {
	// BENCH_BUILD serves a copy of the build, so a rebuild during a long run does not change it.
	const build = process.env.BENCH_BUILD || 'build';
	if (!existsSync(`${build}/handler.js`)) {
		const b = spawnSync('npm', ['run', 'build', '--silent'], { stdio: 'inherit' });
		if (b.status !== 0) throw new Error('build failed');
	}
	if (!keep) rmSync(dbDir, { recursive: true, force: true });
	mkdirSync(dbDir, { recursive: true });
	const origin = `http://127.0.0.1:${port}`;
	const env = {
		...process.env,
		PORT: String(port),
		HOST: '127.0.0.1',
		ORIGIN: origin,
		PUBLIC_BASE_URL: origin,
		DATABASE_URL: `file:${dbDir}/bench.db`,
		AUTH_SECRET: 'bench-only-secret-0123456789',
		SMTP_URL: '',
		BODY_SIZE_LIMIT: '30M',
		...extra
	};
	if (seed) {
		const s = spawnSync('npm', ['run', 'db:seed', '--silent'], { stdio: 'inherit', env });
		if (s.status !== 0) throw new Error('seed failed');
	}
	// Another server already on the port would answer the health probe, take the benchmark's
	// requests and, when its owner stops it, reset them: refuse to start instead.
	await assertPortFree(port);
	// BENCH_NODE_ARGS passes flags to the server's node, e.g. "--cpu-prof --cpu-prof-dir=tmp/prof".
	const nodeArgs = (process.env.BENCH_NODE_ARGS ?? '').split(' ').filter(Boolean);
	// processes > 0: the build behind one port as that many workers (scripts/cluster.js).
	const proc =
		processes > 0
			? spawn('node', [...nodeArgs, 'scripts/cluster.js'], {
					stdio: ['ignore', 'ignore', 'inherit'],
					env: { ...env, PACKLEDGER_PROCESSES: String(processes), PACKLEDGER_BUILD: build }
				})
			: spawn('node', [...nodeArgs, build], { stdio: ['ignore', 'ignore', 'inherit'], env });
	let stopping = false;
	// A server that dies under load says so (and how), rather than surfacing as a client's ECONNRESET.
	proc.once('exit', (code, signal) => {
		if (!stopping)
			console.error(
				`\nThe benchmark's server (pid ${proc.pid}) exited unexpectedly: ${signal ? `signal ${signal}` : `exit code ${code}`}.`
			);
	});
	await waitForHealth(origin, proc);
	return {
		origin,
		env,
		proc,
		stop: () => {
			stopping = true;
			proc.kill('SIGTERM');
		}
	};
}

/** Throws when something already listens on 127.0.0.1:port. */
export function assertPortFree(port) {
	return new Promise((resolve, reject) => {
		const probe = createServer();
		probe.once('error', () =>
			reject(new Error(`Port ${port} is in use by another process: pass a free BENCH_PORT.`))
		);
		probe.listen(port, '127.0.0.1', () => probe.close(() => resolve()));
	});
}

/**
 * Waits until GET /api/health answers 200: migrations on a 200,000-module register (new
 * indexes, the serial search table) can take a minute on a busy machine, so the wait is long
 * (BENCH_START_TIMEOUT seconds, default 300) and ends at once if the server exits.
 */
export async function waitForHealth(origin, proc) {
	const limit = Date.now() + Number(process.env.BENCH_START_TIMEOUT ?? 300) * 1000;
	let exited = false;
	proc?.once('exit', () => (exited = true));
	while (Date.now() < limit && !exited) {
		try {
			if ((await fetch(`${origin}/api/health`)).ok) return;
		} catch {
			/* not up yet */
		}
		await new Promise((r) => setTimeout(r, 250));
	}
	proc?.kill('SIGTERM');
	throw new Error(
		exited
			? `The benchmark's server at ${origin} exited before it was ready.`
			: `The benchmark's server at ${origin} was not ready within ${process.env.BENCH_START_TIMEOUT ?? 300} s (BENCH_START_TIMEOUT).`
	);
}

/** Signs in through Auth.js's standard endpoints; returns a Cookie header value. */
export async function signInCookie(origin, email, password = 'packledger-demo') {
	const jar = new Map();
	const keep = (res) => {
		for (const c of res.headers.getSetCookie()) {
			const [pair] = c.split(';');
			const i = pair.indexOf('=');
			jar.set(pair.slice(0, i), pair.slice(i + 1));
		}
	};
	const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
	const r1 = await fetch(`${origin}/auth/csrf`);
	keep(r1);
	const { csrfToken } = await r1.json();
	const r2 = await fetch(`${origin}/auth/callback/credentials`, {
		method: 'POST',
		redirect: 'manual',
		headers: { 'content-type': 'application/x-www-form-urlencoded', origin, cookie: cookie() },
		body: new URLSearchParams({ csrfToken, email, password })
	});
	keep(r2);
	return cookie();
}
