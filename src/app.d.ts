// See https://svelte.dev/docs/kit/types#app.d.ts
import type { SessionUser, StationPrincipal } from '$lib/server/auth';

declare global {
	namespace App {
		interface Error {
			message: string;
			errorId?: string;
		}
		interface Locals {
			user: SessionUser | null;
			station: StationPrincipal | null;
		}
		// interface PageData {}
		// interface PageState {}
		// interface Platform {}
	}
}

export {};
