import { SvelteKitAuth, CredentialsSignin, type SvelteKitAuthConfig } from '@auth/sveltekit';
import { Auth } from '@auth/core';
import { decode } from '@auth/core/jwt';
import { json, type Handle } from '@sveltejs/kit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { randomBytes } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { getDb, withWriteLock } from '$lib/server/db';
import { organisations, users } from '$lib/server/db/schema';
import { signInSchema } from '$lib/schemas/auth';
import { hashPassword, verifyPassword } from './password';
import { claimSignInAttempt, signInSucceeded } from './rate-limit';
import { currentClientAddress } from '$lib/server/request-context';
import { safeNext } from '$lib/server/safe-redirect';
import { endSessions } from '$lib/server/services/users';
import { findActor } from '$lib/server/services/actors';

class RateLimited extends CredentialsSignin {
	code = 'rate_limited';
}

/**
 * A hash of a random password, checked when the account does not exist (or cannot sign in),
 * so that the answer takes as long as for a real account (OWASP Authentication Cheat Sheet,
 * "Authentication and Error Messages": response times).
 */
let dummyHash: Promise<string> | null = null;
const dummy = () => (dummyHash ??= hashPassword(randomBytes(24).toString('base64url')));

/** Checks e-mail and password; returns the user Auth.js puts in the token, or null. */
async function authorize(credentials: Partial<Record<string, unknown>>) {
	const parsed = signInSchema.safeParse(credentials);
	if (!parsed.success) return null;
	const { email, password } = parsed.data;
	const address = currentClientAddress();
	const db = await getDb();
	// The slot is claimed before any password is checked, so parallel attempts cannot overrun it.
	const attempt = await claimSignInAttempt(db, email, address);
	if (!attempt.allowed) {
		console.warn(`sign-in refused: too many attempts for this account or client (${address})`);
		throw new RateLimited();
	}
	const [user] = await db
		.select({
			id: users.id,
			email: users.email,
			name: users.name,
			role: users.role,
			organisationId: users.organisationId,
			passwordHash: users.passwordHash,
			active: users.active,
			orgActive: organisations.active,
			sessionVersion: users.sessionVersion
		})
		.from(users)
		.innerJoin(organisations, eq(users.organisationId, organisations.id))
		.where(eq(users.email, email))
		.limit(1);
	const usable = !!user && user.active && user.orgActive && !!user.passwordHash;
	const matches = await verifyPassword(usable ? user.passwordHash! : await dummy(), password);
	if (!usable || !matches) {
		console.warn('sign-in refused: e-mail and password do not match an active account');
		return null;
	}
	await signInSucceeded(db, email, address);
	// Queued with this process's other writers, not busy-waiting for SQLite's lock.
	await withWriteLock(db, () =>
		db.update(users).set({ lastSignInAt: new Date() }).where(eq(users.id, user.id))
	);
	return {
		id: String(user.id),
		email: user.email,
		name: user.name,
		role: user.role,
		organisationId: user.organisationId,
		sessionVersion: user.sessionVersion
	};
}

export const authConfig: SvelteKitAuthConfig = {
	trustHost: true,
	basePath: '/auth',
	session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
	pages: { signIn: '/signin' },
	logger: {
		// A wrong password is an everyday event answered on the form, not a server error.
		error(e) {
			// authorize has already written its one line for a refused sign-in.
			if (e instanceof CredentialsSignin || e.name === 'CredentialsSignin') return;
			console.error(e);
		}
	},
	providers: [
		Credentials({
			credentials: {
				email: { label: 'E-mail', type: 'email' },
				password: { label: 'Password', type: 'password' }
			},
			authorize
		})
	],
	callbacks: {
		/** After sign-in or sign-out: only a path on this site (see safeNext). */
		redirect({ url, baseUrl }) {
			const path = url.startsWith(baseUrl) ? url.slice(baseUrl.length) || '/' : url;
			return baseUrl + safeNext(path, baseUrl);
		},
		jwt({ token, user }) {
			if (user) {
				const u = user as {
					id: string;
					role: string;
					organisationId: number;
					sessionVersion: number;
				};
				token.uid = Number(u.id);
				token.role = u.role;
				token.org = u.organisationId;
				token.sv = u.sessionVersion;
			}
			return token;
		},
		session({ session, token }) {
			const s = session as unknown as { user: Record<string, unknown> };
			s.user.id = token.uid;
			s.user.role = token.role;
			s.user.organisationId = token.org;
			s.user.sessionVersion = token.sv;
			return session;
		}
	}
};

export const { handle: authHandle, signIn, signOut } = SvelteKitAuth(authConfig);

/**
 * @auth/sveltekit turns Auth.js's own CSRF token off (SvelteKit checks the Origin
 * of form posts instead), which also removes `/auth/csrf`. Scripts that sign in
 * with a cookie jar expect the standard endpoints, so these three are answered
 * here by Auth.js with its double-submit CSRF check switched back on.
 */
const STANDARD = new Set([
	'GET /auth/csrf',
	'POST /auth/callback/credentials',
	'POST /auth/signout'
]);
export const standardAuthEndpoints: Handle = async ({ event, resolve }) => {
	const route = `${event.request.method} ${event.url.pathname}`;
	if (route === 'GET /auth/session') {
		// An ended session (older session version) reads as signed out here too.
		const claims = await tokenClaims(event.cookies.getAll());
		if (claims) {
			const actor = await findActor(await getDb(), { id: claims.uid });
			if (!actor || actor.sessionVersion !== claims.sv) return json(null);
		}
		return resolve(event);
	}
	if (!STANDARD.has(route)) return resolve(event);
	const response = await Auth(event.request, {
		...authConfig,
		basePath: '/auth',
		secret: process.env.AUTH_SECRET,
		skipCSRFCheck: undefined
	});
	// Auth.js only clears the cookie; a copy of the token must stop working too.
	if (route === 'POST /auth/signout' && response.status < 400) {
		const claims = await tokenClaims(event.cookies.getAll());
		if (claims) await endSessions(await getDb(), claims.uid);
	}
	return response;
};

/** The user id and session version inside a session cookie, or null (a token that does not decode counts as none). */
export async function tokenClaims(
	cookies: { name: string; value: string }[]
): Promise<{ uid: number; sv: number } | null> {
	for (const name of SESSION_COOKIES) {
		const value = cookies.find((c) => c.name === name)?.value;
		if (!value) continue;
		try {
			const token = await decode({ token: value, secret: process.env.AUTH_SECRET!, salt: name });
			const uid = Number(token?.uid);
			if (Number.isInteger(uid) && uid > 0) return { uid, sv: Number(token?.sv) };
		} catch {
			/* not ours, or expired */
		}
	}
	return null;
}

export const SESSION_COOKIES = ['__Secure-authjs.session-token', 'authjs.session-token'];
