/**
 * `npm run start:cluster` (scripts/cluster.js): two worker processes of the build behind one
 * port keep the guarantees of two app servers (tests/server/two-servers.test.ts): a session
 * signed out through one is refused by every worker, and wrong passwords count against one
 * limit whichever worker took them. A worker that dies is replaced; SIGTERM stops them all.
 *
 * Every request here opens its own connection (`agent: false`), and node:cluster's primary
 * hands connections to its workers in turn (round robin, the default on Linux; nodejs.org
 * docs, "Cluster: How it works"), so consecutive requests alternate between the two workers.
 * That both really answered is measured, not assumed: each worker's CPU time (/proc) grows.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { request } from 'node:http';
import { MAX_FAILURES_PER_ACCOUNT } from '$lib/server/auth/rate-limit';
import { freePort, seededBuildEnv } from './served-build';

const DIR = 'data/test-cluster';
const PASSWORD = 'packledger-demo';

let origin = '';
let primary: ChildProcess;
let log = '';

/** The pids of the workers that said they listen, in order (a replaced worker stays listed). */
const listening = () => [...log.matchAll(/worker (\d+) listening/g)].map((m) => Number(m[1]));

const alive = (pid: number) => {
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
};

/** The primary's live worker processes (its children, from /proc). */
const workers = () =>
	readFileSync(`/proc/${primary.pid}/task/${primary.pid}/children`, 'utf8')
		.split(' ')
		.filter(Boolean)
		.map(Number);

/** CPU time (user + system, clock ticks) of a process so far. */
const cpuTicks = (pid: number) => {
	const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
	return Number(f[11]) + Number(f[12]);
};

/** One request on a connection of its own; the status, the Set-Cookie headers and the body. */
function send(
	path: string,
	{ method = 'GET', cookie = '', body = '', form = false } = {}
): Promise<{ status: number; setCookie: string[]; text: string }> {
	return new Promise((resolve, reject) => {
		const req = request(
			`${origin}${path}`,
			{
				method,
				agent: false,
				headers: {
					cookie,
					origin,
					accept: form ? 'text/html' : 'application/json',
					...(form ? { 'content-type': 'application/x-www-form-urlencoded' } : {})
				}
			},
			(res) => {
				let text = '';
				res.setEncoding('utf8');
				res.on('data', (d) => (text += d));
				res.on('end', () =>
					resolve({ status: res.statusCode ?? 0, setCookie: res.headers['set-cookie'] ?? [], text })
				);
			}
		);
		req.once('error', reject);
		req.end(body);
	});
}

/** The sign-in form as a browser posts it: the session cookie (302) or the status. */
async function signIn(email: string, password: string) {
	const r = await send('/signin', {
		method: 'POST',
		form: true,
		body: new URLSearchParams({
			providerId: 'credentials',
			email,
			password,
			redirectTo: '/'
		}).toString()
	});
	const cookie = r.setCookie
		.map((c) => c.split(';', 1)[0])
		.filter((c) => !c.endsWith('='))
		.join('; ');
	return { status: r.status, cookie };
}

beforeAll(async () => {
	const env = seededBuildEnv(DIR, 'cluster-test-secret-0123456789', PASSWORD);
	const port = await freePort();
	origin = `http://127.0.0.1:${port}`;
	primary = spawn('node', ['scripts/cluster.js'], {
		env: {
			...env,
			PORT: String(port),
			HOST: '127.0.0.1',
			ORIGIN: origin,
			PUBLIC_BASE_URL: origin,
			PACKLEDGER_PROCESSES: '2',
			SHUTDOWN_TIMEOUT: '5'
		},
		stdio: ['ignore', 'pipe', 'pipe']
	});
	primary.stdout!.on('data', (d) => (log += d));
	primary.stderr!.on('data', (d) => (log += d));
	for (let i = 0; i < 600 && listening().length < 2; i++) {
		if (primary.exitCode !== null) throw new Error(`the cluster exited: ${log}`);
		await new Promise((r) => setTimeout(r, 100));
	}
	if (listening().length < 2) throw new Error(`two workers did not start: ${log}`);
}, 600_000);

afterAll(() => {
	if (primary?.exitCode === null) {
		for (const pid of workers()) process.kill(pid, 'SIGKILL');
		primary.kill('SIGKILL');
	}
});

describe('two worker processes behind one port (npm run start:cluster)', () => {
	it('starts the number of workers asked for, and both take requests', async () => {
		const pids = workers();
		expect(pids).toHaveLength(2);
		expect(new Set(listening())).toEqual(new Set(pids));
		const { cookie } = await signIn('admin@tidewater.example', PASSWORD);
		const before = pids.map(cpuTicks);
		for (let i = 0; i < 80; i++)
			expect((await send('/api/modules?pageSize=50&sort=serial', { cookie })).status).toBe(200);
		const used = pids.map((pid, i) => cpuTicks(pid) - before[i]);
		expect(used.every((t) => t > 0)).toBe(true);
	}, 60_000);

	it('a session signed out through one worker is refused by every worker', async () => {
		const { status, cookie } = await signIn('admin@tidewater.example', PASSWORD);
		expect(status).toBe(302);
		// A copy of the cookie, as another tab (or a thief) keeps it; fresh connections alternate workers.
		for (let i = 0; i < 6; i++)
			expect((await send('/api/modules?pageSize=1', { cookie })).status).toBe(200);
		const out = await send('/signout', { method: 'POST', form: true, cookie });
		expect(out.status).toBeLessThan(400);
		const after = [];
		for (let i = 0; i < 6; i++)
			after.push((await send('/api/modules?pageSize=1', { cookie })).status);
		expect(after).toEqual(Array(6).fill(401));
		expect(JSON.parse((await send('/auth/session', { cookie })).text)).toBeNull();
	}, 60_000);

	it('counts wrong passwords taken by either worker against one limit', async () => {
		const email = 'dealer@ridgeline.example';
		const statuses: number[] = [];
		for (let i = 0; i < MAX_FAILURES_PER_ACCOUNT; i++)
			statuses.push((await signIn(email, `wrong-${i}`)).status);
		expect(statuses).toEqual([...Array(MAX_FAILURES_PER_ACCOUNT - 1).fill(400), 429]);
		// Both workers (two fresh connections in turn) now refuse the right password too.
		expect((await signIn(email, PASSWORD)).status).toBe(429);
		expect((await signIn(email, PASSWORD)).status).toBe(429);
		expect((await signIn('tech@tidewater.example', PASSWORD)).status).toBe(302);
	}, 60_000);

	it('starts a new worker when one dies, and serves on', async () => {
		const [victim, other] = workers();
		process.kill(victim, 'SIGKILL');
		await expect.poll(() => listening().length, { timeout: 60_000, interval: 200 }).toBe(3);
		const now = workers();
		expect(now).toHaveLength(2);
		expect(now).toContain(other);
		expect(now).not.toContain(victim);
		expect(log).toMatch(
			new RegExp(`worker ${victim} ended \\(signal SIGKILL\\); starting another`)
		);
		for (let i = 0; i < 4; i++) expect((await send('/api/health')).status).toBe(200);
	}, 90_000);

	it('stops every worker and then itself on SIGTERM, with exit code 0', async () => {
		const pids = workers();
		const exited = new Promise<number | null>((r) => primary.once('exit', (code) => r(code)));
		primary.kill('SIGTERM');
		expect(await exited).toBe(0);
		await expect.poll(() => pids.filter(alive), { timeout: 10_000 }).toEqual([]);
	}, 60_000);
});
