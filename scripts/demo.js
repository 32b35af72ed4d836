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
/** Runs a step quietly; its output is shown only when it fails. */
const run = (what, cmd, args) => {
	const r = spawnSync(cmd, args, { env, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
	if (r.status !== 0) {
		process.stdout.write(r.stdout ?? '');
		process.stderr.write(r.stderr ?? '');
		console.error(`\n${what} failed (exit ${r.status ?? r.signal}); its output is above.`);
		process.exit(r.status ?? 1);
	}
};

if (!existsSync('build/handler.js') || newest('src') > statSync('build/handler.js').mtimeMs) {
	console.log('Building the app (a minute or two the first time)…');
	run('The build', 'npm', ['run', 'build', '--silent']);
}
console.log('Loading the demo data…');
run('The demo seed', 'npm', ['run', 'db:seed', '--silent']);

const signIns = () => {
	console.log(
		`\nPackledger is running on ${origin}\nSign in with any of these (password ${process.env.DEMO_PASSWORD ? 'from DEMO_PASSWORD' : '"packledger-demo"'}):`
	);
	for (const u of ['admin', 'workshop', 'tech', 'warranty']
		.map((r) => `${r}@tidewater.example`)
		.concat(['dealer@saltmarsh.example', 'dealer@ridgeline.example', 'tech@ridgeline.example']))
		console.log(`  ${u}`);
	console.log('Stop it with Ctrl+C.');
};
const server = spawn('node', ['build'], { stdio: ['inherit', 'pipe', 'inherit'], env });
let shown = false;
server.stdout.setEncoding('utf8');
server.stdout.on('data', (chunk) => {
	// adapter-node announces "Listening on …"; the URL and sign-ins replace that line.
	const rest = shown ? chunk : chunk.replace(/^Listening on [^\n]*\n?/m, '');
	if (!shown && rest !== chunk) {
		shown = true;
		if (rest) process.stdout.write(rest);
		signIns();
	} else process.stdout.write(chunk);
});
server.on('exit', (code) => process.exit(code ?? 0));
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => server.kill(sig));
