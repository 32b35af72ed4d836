// Serves the production build on a throwaway database for the browser tests.
import { spawnSync, spawn } from 'node:child_process';
import { rmSync, mkdirSync } from 'node:fs';

const dbFile = 'data/e2e/e2e.db';
rmSync('data/e2e', { recursive: true, force: true });
mkdirSync('data/e2e', { recursive: true });
const env = {
	...process.env,
	DATABASE_URL: `file:${dbFile}`,
	AUTH_SECRET: 'e2e-only-secret-not-for-production-use',
	PUBLIC_BASE_URL: process.env.ORIGIN,
	UPLOAD_DIR: 'data/e2e/uploads',
	SMTP_URL: '',
	BODY_SIZE_LIMIT: '30M'
};
const run = (cmd, args) => {
	const r = spawnSync(cmd, args, { stdio: 'inherit', env });
	if (r.status !== 0) process.exit(r.status ?? 1);
};
if (!process.env.E2E_SKIP_BUILD) run('npm', ['run', 'build', '--silent']);
run('npm', ['run', 'db:seed', '--silent']);
const server = spawn('node', ['build'], { stdio: 'inherit', env });
server.on('exit', (code) => process.exit(code ?? 0));
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => server.kill(sig));
