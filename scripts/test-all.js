// The test command: lint (ESLint), format check (Prettier), type check (svelte-check), unit tests,
// then browser tests in Debian's Chromium.
// Makes sure the browser is there first (installs it with apt where it may).
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

const CHROMIUM = process.env.CHROMIUM_PATH || '/usr/bin/chromium';
const run = (cmd, args, opts = {}) =>
	spawnSync(cmd, args, { stdio: 'inherit', ...opts }).status ?? 1;

if (!existsSync(CHROMIUM)) {
	const isRoot = process.getuid?.() === 0;
	const sudo = isRoot ? [] : spawnSync('sudo', ['-n', 'true']).status === 0 ? ['sudo', '-n'] : null;
	if (!sudo) {
		console.error(
			`Chromium is missing at ${CHROMIUM}. Install it with:  sudo apt-get install -y chromium\n(or set CHROMIUM_PATH to a Chromium binary), then run npm test again.`
		);
		process.exit(1);
	}
	console.log("Installing Debian's chromium for the browser tests…");
	const [cmd, ...pre] = sudo.length ? sudo : ['env'];
	if (
		run(cmd, [...pre, 'apt-get', 'update', '-qq']) !== 0 ||
		run(cmd, [...pre, 'apt-get', 'install', '-y', '-qq', 'chromium']) !== 0
	) {
		console.error(
			'Installing chromium failed. Install it by hand (apt-get install -y chromium) and run npm test again.'
		);
		process.exit(1);
	}
}

const lint = run('npx', ['eslint', '.']);
if (lint !== 0) {
	console.error('ESLint found problems (above). Fix them; `npx eslint --fix <file>` fixes some.');
	process.exit(lint);
}
const format = run('npx', ['prettier', '--check', '.']);
if (format !== 0) {
	console.error('These files are not formatted: run `npx prettier --write <file>` on them.');
	process.exit(format);
}
const types = run('npm', ['run', 'check', '--silent']);
if (types !== 0) process.exit(types);
const unit = run('npx', ['vitest', 'run']);
if (unit !== 0) process.exit(unit);
process.exit(run('npx', ['playwright', 'test']));
