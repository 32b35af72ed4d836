// One command from a fresh clone to a running demo: builds if needed, makes a local
// secret on first run, migrates, seeds the invented scenario and serves the app.
import { spawnSync, spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync, statSync, readdirSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { join } from 'node:path';

const port = process.env.PORT || '3000';
const origin = process.env.ORIGIN || `http://localhost:${port}`;
mkdirSync('data', { recursive: true });

const secretFile = join('data', '.auth-secret');
if (!process.env.AUTH_SECRET && !existsSync(secretFile)) {
	writeFileSync(secretFile, randomBytes(33).toString('base64'), { mode: 0o600 });
	console.log(`Made a local AUTH_SECRET in ${secretFile}`);
}
const env = {
	...process.env,
	PORT: port,
	BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT || '30M',
	ORIGIN: origin,
	PUBLIC_BASE_URL: process.env.PUBLIC_BASE_URL || origin,
	DATABASE_URL: process.env.DATABASE_URL || 'file:data/packledger.db',
	AUTH_SECRET: process.env.AUTH_SECRET || readFileSync(secretFile, 'utf8').trim()
};

function newest(dir) {
	let t = 0;
	for (const e of readdirSync(dir, { withFileTypes: true })) {
		const p = join(dir, e.name);
		t = Math.max(t, e.isDirectory() ? newest(p) : statSync(p).mtimeMs);
	}
	return t;
}
const run = (cmd, args) => {
	const r = spawnSync(cmd, args, { stdio: 'inherit', env });
	if (r.status !== 0) process.exit(r.status ?? 1);
};

if (!existsSync('build/handler.js') || newest('src') > statSync('build/handler.js').mtimeMs) {
	console.log('Building the app…');
	run('npm', ['run', 'build', '--silent']);
}
run('npm', ['run', 'db:seed', '--silent']);

console.log(
	`\nPackledger is starting on ${origin}\nDemo sign-ins (password ${process.env.DEMO_PASSWORD ? 'from DEMO_PASSWORD' : '"packledger-demo"'}):`
);
for (const u of ['admin', 'workshop', 'tech', 'warranty']
	.map((r) => `${r}@tidewater.example`)
	.concat(['dealer@saltmarsh.example', 'dealer@ridgeline.example', 'tech@ridgeline.example']))
	console.log(`  ${u}`);
const server = spawn('node', ['build'], { stdio: 'inherit', env });
server.on('exit', (code) => process.exit(code ?? 0));
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => server.kill(sig));
