// Ambient types for SvelteKit: what hooks put on `locals`, what errors carry.
declare global {
	namespace App {
		interface Error {
			message: string;
			/** Short id that links the page a person sees to the server log line. */
			reference?: string;
		}
		// interface Locals {}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
