import { SvelteKitAuth, CredentialsSignin } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import { db } from '$lib/server/db';
import { verifyPassword } from '$lib/server/auth/password';
import { findUserByEmail } from '$lib/server/users';

/**
 * Auth.js: e-mail and password, JWT sessions in an httpOnly, SameSite=Lax cookie (Secure and
 * __Secure- prefixed when served over https). The sign-in page's action validates, rate-limits
 * and checks the password before it hands over to `signIn`; `authorize` checks again, so
 * nothing reaches a session without a matching hash.
 */
export const { handle, signIn, signOut } = SvelteKitAuth({
	trustHost: true,
	secret: process.env.AUTH_SECRET,
	session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
	pages: { signIn: '/signin', error: '/signin' },
	providers: [
		Credentials({
			credentials: { email: {}, password: {} },
			authorize: async (credentials) => {
				const email = String(credentials?.email ?? '');
				const password = String(credentials?.password ?? '');
				const user = await findUserByEmail(db(), email);
				const ok = await verifyPassword(password, user?.passwordHash);
				if (!user || !ok) throw new CredentialsSignin();
				return { id: String(user.id), email: user.email, name: user.name };
			}
		})
	],
	callbacks: {
		jwt({ token, user }) {
			if (user?.id) token.uid = user.id;
			return token;
		},
		session({ session, token }) {
			if (session.user && typeof token.uid === 'string') session.user.id = token.uid;
			return session;
		}
	}
});
