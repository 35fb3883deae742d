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
	#retries = 0;
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
		const client = new pg.Client({ connectionString: settings().DATABASE_URL, connectionTimeoutMillis: 3_000, keepAlive: true });
		let lost = false;
		const onLost = () => {
			// The connection dropped (database stopped or restarted): reconnect, then catch up from the
			// log. A failure while connecting is the caller's to retry (the catch below).
			if (lost) return;
			lost = true;
			client.end().catch(() => {});
			if (this.#client !== client) return;
			this.#client = null;
			this.#reconnectSoon();
		};
		client.on('notification', () => void this.#pull());
		client.on('error', onLost);
		client.on('end', onLost);
		try {
			await client.connect();
			await client.query(`LISTEN ${EVENT_CHANNEL}`);
		} catch (e) {
			lost = true;
			client.end().catch(() => {});
			throw e;
		}
		if (lost) return;
		this.#client = client;
		this.#retries = 0;
		void this.#pull();
	}

	/** Tries again after 0.5 s, doubling up to 5 s, until connected or stopped. */
	#reconnectSoon(): void {
		if (this.#stopped) return;
		const delay = Math.min(500 * 2 ** this.#retries, 5_000);
		this.#retries++;
		setTimeout(() => {
			if (this.#stopped || this.#client) return;
			this.#connect().catch(() => this.#reconnectSoon());
		}, delay).unref();
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
		const client = this.#client;
		this.#client = null;
		client?.end().catch(() => {});
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
