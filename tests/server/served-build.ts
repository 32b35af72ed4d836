import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';

/**
 * For the tests that serve the production build as separate processes on one database
 * (two-servers, cluster): a free port on 127.0.0.1, and a freshly seeded database with the
 * environment those processes share.
 */
export function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.once('error', reject);
		s.listen(0, '127.0.0.1', () => {
			const addr = s.address();
			s.close(() => (addr && typeof addr === 'object' ? resolve(addr.port) : reject()));
		});
	});
}

/**
 * Builds the app if `build/` lacks it, seeds a new demo database in `dir` (signing in with
 * `password`) and answers the environment every process of the test is started with.
 */
export function seededBuildEnv(dir: string, secret: string, password: string): NodeJS.ProcessEnv {
	if (!existsSync('build/handler.js')) {
		const b = spawnSync('npm', ['run', 'build', '--silent'], { stdio: 'pipe' });
		if (b.status !== 0) throw new Error(`build failed: ${b.stderr}`);
	}
	rmSync(dir, { recursive: true, force: true });
	mkdirSync(dir, { recursive: true });
	const env = {
		...process.env,
		DATABASE_URL: `file:${dir}/shared.db`,
		AUTH_SECRET: secret,
		UPLOAD_DIR: `${dir}/uploads`,
		SMTP_URL: '',
		DEMO_PASSWORD: password
	};
	const seeded = spawnSync('npm', ['run', 'db:seed', '--silent'], { env, stdio: 'pipe' });
	if (seeded.status !== 0) throw new Error(`seed failed: ${seeded.stderr}`);
	return env;
}
