// Live fan-out: one LISTEN connection per app instance; on each notification it reads the new
// events from the log (so every instance sees every event, whichever instance wrote it) and
// hands them to the streams open on this instance.
import pg from 'pg';
import { settings } from './env';
import { EVENT_CHANNEL, eventsSince, latestEventId, pruneEvents, type StoredEvent } from './events';

export type Subscriber = { accepts: (e: StoredEvent) => boolean; push: (e: StoredEvent) => void; close: () => void };

const PAGE = 5000;

class LiveHub {
	#client: pg.Client | null = null;
	#subscribers = new Set<Subscriber>();
	#lastId = 0;
	#pulling = false;
	#again = false;
	#stopped = false;
	#prune: ReturnType<typeof setInterval> | null = null;

	get lastId(): number {
		return this.#lastId;
	}

	async start(): Promise<void> {
		this.#lastId = await latestEventId();
		await this.#connect();
		this.#prune = setInterval(() => void pruneEvents().catch(() => {}), 10 * 60_000);
		this.#prune.unref();
		process.once('sveltekit:shutdown', () => this.stop());
	}

	async #connect(): Promise<void> {
		const client = new pg.Client({ connectionString: settings().DATABASE_URL });
		client.on('notification', () => void this.#pull());
		client.on('error', () => {
			// The connection dropped (database restart): reconnect, then catch up from the log.
			this.#client = null;
			client.end().catch(() => {});
			if (!this.#stopped) setTimeout(() => void this.#connect().catch(() => {}), 1000).unref();
		});
		await client.connect();
		await client.query(`LISTEN ${EVENT_CHANNEL}`);
		this.#client = client;
		void this.#pull();
	}

	async #pull(): Promise<void> {
		if (this.#pulling) {
			this.#again = true;
			return;
		}
		this.#pulling = true;
		try {
			let page: StoredEvent[];
			do {
				this.#again = false;
				page = await eventsSince(this.#lastId, { limit: PAGE });
				for (const e of page) {
					this.#lastId = e.id;
					for (const s of this.#subscribers) if (s.accepts(e)) s.push(e);
				}
			} while (this.#again || page.length === PAGE);
		} catch {
			// A failed read is retried by the next notification or reconnect.
		} finally {
			this.#pulling = false;
		}
	}

	subscribe(s: Subscriber): () => void {
		this.#subscribers.add(s);
		return () => this.#subscribers.delete(s);
	}

	stop(): void {
		this.#stopped = true;
		if (this.#prune) clearInterval(this.#prune);
		for (const s of this.#subscribers) s.close();
		this.#subscribers.clear();
		this.#client?.end().catch(() => {});
		this.#client = null;
	}
}

// One hub per process, started on first use (a process that never streams never listens).
let hub: Promise<LiveHub> | null = null;

export function liveHub(): Promise<LiveHub> {
	hub ??= (async () => {
		const h = new LiveHub();
		await h.start();
		return h;
	})().catch((e: unknown) => {
		hub = null;
		throw e;
	});
	return hub;
}
