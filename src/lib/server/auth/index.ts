import { SvelteKitAuth, CredentialsSignin, type SvelteKitAuthConfig } from '@auth/sveltekit';
import { Auth } from '@auth/core';
import type { Handle } from '@sveltejs/kit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { eq } from 'drizzle-orm';
import { getDb } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import { signInSchema } from '$lib/schemas/auth';
import { verifyPassword } from './password';
import { clearSignInFailures, recordSignInFailure, signInBlockedFor } from './rate-limit';
import { currentClientAddress } from '$lib/server/request-context';

class RateLimited extends CredentialsSignin {
	code = 'rate_limited';
}

/** Checks e-mail and password; returns the user Auth.js puts in the token, or null. */
async function authorize(credentials: Partial<Record<string, unknown>>) {
	const parsed = signInSchema.safeParse(credentials);
	if (!parsed.success) return null;
	const { email, password } = parsed.data;
	const address = currentClientAddress();
	if (signInBlockedFor(email, address) > 0) throw new RateLimited();
	const db = await getDb();
	const [user] = await db.select().from(users).where(eq(users.email, email)).limit(1);
	const ok =
		!!user &&
		user.active &&
		!!user.passwordHash &&
		(await verifyPassword(user.passwordHash, password));
	if (!ok || !user) {
		recordSignInFailure(email, address);
		return null;
	}
	clearSignInFailures(email);
	await db.update(users).set({ lastSignInAt: new Date() }).where(eq(users.id, user.id));
	return {
		id: String(user.id),
		email: user.email,
		name: user.name,
		role: user.role,
		organisationId: user.organisationId
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
			if (e.name !== 'CredentialsSignin') console.error(e);
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
		jwt({ token, user }) {
			if (user) {
				const u = user as { id: string; role: string; organisationId: number };
				token.uid = Number(u.id);
				token.role = u.role;
				token.org = u.organisationId;
			}
			return token;
		},
		session({ session, token }) {
			const s = session as unknown as { user: Record<string, unknown> };
			s.user.id = token.uid;
			s.user.role = token.role;
			s.user.organisationId = token.org;
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
export const standardAuthEndpoints: Handle = ({ event, resolve }) => {
	if (!STANDARD.has(`${event.request.method} ${event.url.pathname}`)) return resolve(event);
	return Auth(event.request, {
		...authConfig,
		basePath: '/auth',
		secret: process.env.AUTH_SECRET,
		skipCSRFCheck: undefined
	});
};
