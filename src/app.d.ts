// Ambient types for SvelteKit: what hooks put on `locals`, what errors carry.
declare global {
	namespace App {
		interface Error {
			message: string;
			/** Short id that links the page a person sees to the server log line. */
			reference?: string;
		}
		interface Locals {
			/** The signed-in person, re-checked against the database on every request; null when signed out. */
			actor: import('$lib/server/access/guard').Actor | null;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
