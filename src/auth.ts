import { SvelteKitAuth, CredentialsSignin } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import type { RequestEvent } from '@sveltejs/kit';
import { authenticate } from '$lib/server/auth/sign-in';
import { config } from '$lib/server/config';

/** Auth.js's answer to a refused sign-in; `code` reaches /signin?error=…&code=… for scripts too. */
class SignInRefused extends CredentialsSignin {
	constructor(code: 'credentials' | 'rate-limited') {
		super();
		this.code = code;
	}
}

/**
 * Auth.js: e-mail and password, JWT sessions in an httpOnly, SameSite=Lax cookie (Secure and
 * __Secure- prefixed when ORIGIN is https). The config is made per request so `authorize` has
 * the request's address: the rate limit and the audit trail live inside it (`authenticate`),
 * the one path every sign-in takes — the sign-in page and a direct POST to
 * /auth/callback/credentials alike. The session cookie carries the account's session
 * generation; hooks.server.ts refuses a cookie whose generation is not the account's.
 */
export const { handle, signIn, signOut } = SvelteKitAuth(async (event: RequestEvent) => ({
	trustHost: true,
	secret: config.authSecret,
	useSecureCookies: config.origin.startsWith('https://') || undefined,
	session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
	pages: { signIn: '/signin', error: '/signin' },
	providers: [
		Credentials({
			credentials: { email: {}, password: {} },
			authorize: async (credentials) => {
				const email = String(credentials?.email ?? '');
				const password = String(credentials?.password ?? '');
				const outcome = await authenticate(event, email, password);
				event.locals.signInOutcome = outcome;
				if (!outcome.ok) throw new SignInRefused(outcome.reason);
				return {
					id: String(outcome.userId),
					email: outcome.email,
					name: outcome.name,
					generation: outcome.sessionGeneration
				};
			}
		})
	],
	callbacks: {
		jwt({ token, user }) {
			if (user?.id) {
				token.uid = user.id;
				token.gen = (user as { generation?: number }).generation ?? 0;
			}
			return token;
		},
		session({ session, token }) {
			if (session.user && typeof token.uid === 'string') {
				session.user.id = token.uid;
				(session.user as { generation?: number }).generation =
					typeof token.gen === 'number' ? token.gen : -1;
			}
			return session;
		}
	}
}));
