// Live fan-out: one LISTEN connection per app instance; on each notification it reads the new
// events from the log (so every instance sees every event, whichever instance wrote it) and
// hands them to the streams open on this instance.
import pg from 'pg';
import { settings } from './env';
import { EVENT_CHANNEL, eventsPage, latestEventId, onAnnounce, pruneEvents, type StoredEvent } from './events';

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
	/** A missing id after `after`, first seen when transactions before `horizon` could still hold it. */
	#gap: { after: number; horizon: bigint } | null = null;
	#recheck: ReturnType<typeof setTimeout> | null = null;
	#prune: ReturnType<typeof setInterval> | null = null;
	#poll: ReturnType<typeof setInterval> | null = null;

	get lastId(): number {
		return this.#lastId;
	}

	async start(): Promise<void> {
		this.#lastId = await latestEventId();
		await this.#connect();
		this.#prune = setInterval(() => void pruneEvents().catch(() => {}), 10 * 60_000);
		this.#prune.unref();
		// Posts of this process wake the hub directly; a notification from another instance, or
		// this poll once a second, catches anything else (a lost announcement, a failed read).
		onAnnounce(() => void this.#pull());
		this.#poll = setInterval(() => void this.#pull(), 1_000);
		this.#poll.unref();
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
			let waiting = false;
			do {
				this.#again = false;
				const read = await eventsPage(this.#lastId, PAGE);
				page = read.events;
				for (const e of page) {
					// Ids are drawn when a transaction writes its events, but transactions commit in
					// their own order: a missing lower id may still be on its way. Wait until every
					// transaction that was running when the gap was first seen has ended; if the id
					// is still missing then, its transaction rolled back and the gap is for good.
					if (e.id !== this.#lastId + 1) {
						if (this.#gap?.after !== this.#lastId) this.#gap = { after: this.#lastId, horizon: read.xmax };
						if (read.xmin < this.#gap.horizon) {
							waiting = true;
							break;
						}
					}
					this.#gap = null;
					this.#lastId = e.id;
					for (const s of this.#subscribers) if (s.accepts(e)) s.push(e);
				}
			} while (!waiting && (this.#again || page.length === PAGE));
			// A commit announces itself; a rollback does not, so look again shortly.
			if (waiting) this.#recheckSoon();
		} catch {
			// A failed read is retried by the next notification, the poll, or a reconnect.
		} finally {
			this.#pulling = false;
		}
	}

	#recheckSoon(): void {
		if (this.#recheck || this.#stopped) return;
		this.#recheck = setTimeout(() => {
			this.#recheck = null;
			void this.#pull();
		}, 50);
		this.#recheck.unref();
	}

	subscribe(s: Subscriber): () => void {
		this.#subscribers.add(s);
		return () => this.#subscribers.delete(s);
	}

	stop(): void {
		this.#stopped = true;
		if (this.#prune) clearInterval(this.#prune);
		if (this.#poll) clearInterval(this.#poll);
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
