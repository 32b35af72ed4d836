/**
 * Two app servers on one database behave as one (issue 17, item 7): two `node build`
 * processes share one SQLite file and one AUTH_SECRET, as two machines behind a reverse proxy
 * would share a libSQL server. A session ended on one is refused by the other, the sign-in
 * limit counts attempts made on both, and mail sent by either lands in the one outbox (each
 * process runs its own loopback fake SMTP server, which stores into the shared table).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, type ChildProcess } from 'node:child_process';
import { MAX_FAILURES_PER_ACCOUNT } from '$lib/server/auth/rate-limit';
import { freePort, seededBuildEnv } from './served-build';

const DIR = 'data/test-two-servers';
const PASSWORD = 'packledger-demo';

interface Server {
	origin: string;
	proc: ChildProcess;
	log: string;
}
const servers: Server[] = [];

async function start(port: number, env: NodeJS.ProcessEnv): Promise<Server> {
	const origin = `http://127.0.0.1:${port}`;
	const proc = spawn('node', ['build'], {
		env: { ...env, PORT: String(port), HOST: '127.0.0.1', ORIGIN: origin, PUBLIC_BASE_URL: origin },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	const server: Server = { origin, proc, log: '' };
	proc.stdout!.on('data', (d) => (server.log += d));
	proc.stderr!.on('data', (d) => (server.log += d));
	servers.push(server);
	for (let i = 0; i < 300; i++) {
		if (proc.exitCode !== null) throw new Error(`server on ${port} exited: ${server.log}`);
		const ok = await fetch(`${origin}/signin`)
			.then((r) => r.ok)
			.catch(() => false);
		if (ok) return server;
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`server on ${port} did not answer: ${server.log}`);
}

/** A cookie jar for one person, usable against either server. */
class Jar {
	cookies = new Map<string, string>();
	keep(res: Response) {
		for (const c of res.headers.getSetCookie()) {
			const [pair, ...attrs] = c.split(';');
			const i = pair.indexOf('=');
			const name = pair.slice(0, i).trim();
			const value = pair.slice(i + 1);
			const expired = attrs.some((a) => /^\s*max-age=0\s*$/i.test(a)) || value === '';
			if (expired) this.cookies.delete(name);
			else this.cookies.set(name, value);
		}
	}
	get header() {
		return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
	}
	copy() {
		const j = new Jar();
		j.cookies = new Map(this.cookies);
		return j;
	}
}

/** The sign-in form, as a browser posts it: 302 signed in, 400 wrong, 429 over the limit. */
async function signIn(server: Server, email: string, password: string, jar = new Jar()) {
	const res = await fetch(`${server.origin}/signin`, {
		method: 'POST',
		redirect: 'manual',
		headers: {
			origin: server.origin,
			accept: 'text/html',
			'content-type': 'application/x-www-form-urlencoded',
			cookie: jar.header
		},
		body: new URLSearchParams({ providerId: 'credentials', email, password, redirectTo: '/' })
	});
	jar.keep(res);
	await res.arrayBuffer();
	return { status: res.status, jar };
}

const api = (server: Server, path: string, jar: Jar) =>
	fetch(`${server.origin}${path}`, { headers: { cookie: jar.header }, redirect: 'manual' });

beforeAll(async () => {
	const env = seededBuildEnv(DIR, 'two-servers-test-secret-0123456789', PASSWORD);
	const [a, b] = [await freePort(), await freePort()];
	await Promise.all([start(a, env), start(b, env)]);
}, 600_000);

afterAll(() => {
	for (const s of servers) if (s.proc.exitCode === null) s.proc.kill('SIGKILL');
});

describe('two app servers on one SQLite file', () => {
	it('a session signed in on one works on the other, and signed out on one is refused by the other', async () => {
		const [a, b] = servers;
		const { status, jar } = await signIn(a, 'admin@tidewater.example', PASSWORD);
		expect(status).toBe(302);
		const copy = jar.copy();
		expect((await api(b, '/api/modules?pageSize=1', copy)).status).toBe(200);
		const out = await fetch(`${a.origin}/signout`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				origin: a.origin,
				accept: 'text/html',
				'content-type': 'application/x-www-form-urlencoded',
				cookie: jar.header
			},
			body: ''
		});
		expect(out.status).toBeLessThan(400);
		// The copy still carries the old cookie: server B must refuse it on its own.
		const after = await api(b, '/api/modules?pageSize=1', copy);
		expect(after.status).toBe(401);
		expect(await (await api(b, '/auth/session', copy)).json()).toBeNull();
		// And A refuses it too (it was never told by B; this is the same check from the other side).
		expect((await api(a, '/api/modules?pageSize=1', copy)).status).toBe(401);
	}, 60_000);

	it('counts wrong passwords made on either server against one limit', async () => {
		const [a, b] = servers;
		const email = 'dealer@ridgeline.example';
		const statuses: number[] = [];
		// Alternate servers: five wrong passwords in all (three on A, two on B). Neither server saw
		// five on its own, yet the fifth failure already says the account is now blocked.
		for (let i = 0; i < MAX_FAILURES_PER_ACCOUNT; i++)
			statuses.push((await signIn(i % 2 ? b : a, email, `wrong-${i}`)).status);
		expect(statuses).toEqual([...Array(MAX_FAILURES_PER_ACCOUNT - 1).fill(400), 429]);
		// Either server now refuses even the right password: the count lives in the database.
		expect((await signIn(a, email, PASSWORD)).status).toBe(429);
		expect((await signIn(b, email, PASSWORD)).status).toBe(429);
		// Another account is not affected.
		expect((await signIn(b, 'tech@tidewater.example', PASSWORD)).status).toBe(302);
	}, 60_000);

	it('mail sent through either server is in the one outbox', async () => {
		const [a, b] = servers;
		const forgot = (s: Server, email: string) =>
			fetch(`${s.origin}/forgot`, {
				method: 'POST',
				headers: {
					origin: s.origin,
					accept: 'application/json',
					'content-type': 'application/x-www-form-urlencoded'
				},
				body: new URLSearchParams({ email })
			}).then((r) => r.status);
		expect(await forgot(a, 'warranty@tidewater.example')).toBeLessThan(400);
		expect(await forgot(b, 'workshop@tidewater.example')).toBeLessThan(400);
		const { jar } = await signIn(b, 'admin@tidewater.example', PASSWORD);
		const seen = async (s: Server, to: string) => {
			const r = await api(s, `/api/outbox?to=${encodeURIComponent(to)}`, jar);
			return ((await r.json()) as { items: unknown[] }).items.length;
		};
		await expect.poll(() => seen(b, 'warranty@tidewater.example'), { timeout: 15_000 }).toBe(1);
		await expect.poll(() => seen(a, 'workshop@tidewater.example'), { timeout: 15_000 }).toBe(1);
	}, 60_000);
});
