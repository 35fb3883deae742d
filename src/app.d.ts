// See https://svelte.dev/docs/kit/types#app.d.ts
import type { SessionUser, StationPrincipal } from '$lib/server/auth';

declare global {
	namespace App {
		interface Error {
			message: string;
			errorId?: string;
			/** The database was unavailable (the answer is a 503 with Retry-After). */
			unavailable?: boolean;
		}
		interface Locals {
			user: SessionUser | null;
			station: StationPrincipal | null;
			/** Set by handleError when the request failed because the database was away. */
			databaseUnavailable?: boolean;
			/** ms spent finding the signed-in person or the station (Server-Timing on station posts). */
			authMs?: number;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
