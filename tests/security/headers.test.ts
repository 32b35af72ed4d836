/**
 * Headers every answer carries (OWASP Secure Headers Project); HSTS only over https
 * (RFC 6797 §7.2); the camera only on the scanning pages (W3C Permissions Policy).
 */
import { afterEach, describe, expect, it } from 'vitest';
import type { RequestEvent } from '@sveltejs/kit';
import { securityHeaders, usesCamera } from '$lib/server/security-headers';

const run = async (path: string) => {
	const event = { url: new URL(`http://localhost${path}`) } as unknown as RequestEvent;
	const res = await securityHeaders({ event, resolve: async () => new Response('ok') });
	return res.headers;
};

afterEach(() => {
	delete process.env.ORIGIN;
});

describe('security headers', () => {
	it('sets nosniff, the referrer policy and no framing on every answer', async () => {
		const h = await run('/api/modules');
		expect(h.get('x-content-type-options')).toBe('nosniff');
		expect(h.get('referrer-policy')).toBe('strict-origin-when-cross-origin');
		expect(h.get('x-frame-options')).toBe('DENY');
	});
	it('sends HSTS only when ORIGIN is https', async () => {
		process.env.ORIGIN = 'http://localhost:3000';
		expect((await run('/')).get('strict-transport-security')).toBeNull();
		process.env.ORIGIN = 'https://register.tidewater.example';
		expect((await run('/')).get('strict-transport-security')).toMatch(/^max-age=\d+/);
	});
	it.each([
		['/bench', true],
		['/shipments/12', true],
		['/claims/new', true],
		['/claims/7', true],
		['/systems/3', true],
		['/systems/3/commission', false],
		['/offline', true],
		['/offline/systems/3', true],
		['/offlinex', false],
		['/fleet', false],
		['/signin', false],
		['/shipments', false],
		['/bench/' + 'x'.repeat(200_000), false]
	])('camera on %s: %s', async (path, allowed) => {
		expect(usesCamera(path)).toBe(allowed);
		expect((await run(path.slice(0, 100))).get('permissions-policy')).toContain(
			allowed ? 'camera=(self)' : 'camera=()'
		);
	});
});
