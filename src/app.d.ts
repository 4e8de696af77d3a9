// See https://svelte.dev/docs/kit/types#app.d.ts
declare global {
	namespace App {
		interface Locals {
			/** The signed-in person, confirmed against the database on every request. */
			user: { id: number; email: string; name: string } | null;
			/** What the credentials check answered, for the sign-in page (set inside Auth.js's authorize). */
			signInOutcome?: import('$lib/server/auth/sign-in').SignInOutcome;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
