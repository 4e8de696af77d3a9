// See https://svelte.dev/docs/kit/types#app.d.ts
declare global {
	namespace App {
		interface Locals {
			/** The signed-in person, confirmed against the database on every request. */
			user: { id: number; email: string; name: string } | null;
		}
		interface Error {
			message: string;
		}
	}
}

export {};
