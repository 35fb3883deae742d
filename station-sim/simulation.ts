/**
 * Runs several simulated stations in-process; used by the CLI, by the server's start command
 * (demo mode) and by tests.
 */
import type { Logger } from './client';
import { Station, type FaultKind, type FaultSpec, type StationDeps, type StationStats } from './station';

export interface StationToken {
	name: string;
	token: string;
	lot: string;
	product?: string | null;
}

export interface SimulationOptions {
	url: string;
	tokens: StationToken[];
	/** How many of the tokens to run (default all). */
	stations?: number;
	/** Parts per second per station (default 1). */
	rate?: number;
	/** Batch size range (default 1..10). */
	batchMin?: number;
	batchMax?: number;
	/** Reference part every N parts (default 50) and/or every N minutes (default null). */
	refEveryParts?: number | null;
	refEveryMin?: number | null;
	seed?: number | string;
	faults?: FaultSpec[];
	/** Stop by itself after this many seconds. */
	durationS?: number;
	serialStart?: number;
	frequencyNoisePpm?: number;
	log?: Logger;
	/** Injected for tests. */
	fetch?: typeof fetch;
	now?: () => number;
	sleep?: (ms: number, signal?: AbortSignal) => Promise<void>;
	uuid?: () => string;
	client?: StationDeps['client'];
}

export interface SimulationStats {
	stations: StationStats[];
	totals: { posted: number; acknowledged: number; references: number; retries: number; errors: number; rejected: number; calibrations: number };
}

export interface SimulationHandle {
	/** Stops every station (in-flight requests are aborted) and resolves with the final counters. */
	stop(): Promise<SimulationStats>;
	/** Current counters. */
	stats(): SimulationStats;
	/** Resolves when every station has ended (after stop() or the duration). */
	done: Promise<SimulationStats>;
}

export const FAULT_KINDS: readonly FaultKind[] = ['drift', 'badlot', 'noisy', 'malformed', 'offline'];

function collect(stations: Station[]): SimulationStats {
	const list = stations.map((s) => s.stats());
	const totals = { posted: 0, acknowledged: 0, references: 0, retries: 0, errors: 0, rejected: 0, calibrations: 0 };
	for (const s of list) {
		totals.posted += s.posted;
		totals.acknowledged += s.acknowledged;
		totals.references += s.references;
		totals.retries += s.retries;
		totals.errors += s.errors;
		totals.rejected += s.rejected;
		totals.calibrations += s.calibrations;
	}
	return { stations: list, totals };
}

/** Starts the stations at once; assumes distinct station names. Never throws for a server that is down. */
export function runSimulation(options: SimulationOptions): SimulationHandle {
	const controller = new AbortController();
	const chosen = options.tokens.slice(0, options.stations ?? options.tokens.length);
	const stations = chosen.map(
		(t) =>
			new Station(
				{
					name: t.name,
					token: t.token,
					lot: t.lot,
					product: t.product ?? null,
					baseUrl: options.url,
					rate: options.rate ?? 1,
					batchMin: options.batchMin ?? 1,
					batchMax: options.batchMax ?? 10,
					refEveryParts: options.refEveryParts === undefined ? 50 : options.refEveryParts,
					refEveryMin: options.refEveryMin ?? null,
					seed: options.seed ?? 1,
					faults: options.faults ?? [],
					...(options.serialStart !== undefined ? { serialStart: options.serialStart } : {}),
					...(options.frequencyNoisePpm !== undefined ? { frequencyNoisePpm: options.frequencyNoisePpm } : {})
				},
				{
					signal: controller.signal,
					...(options.log ? { log: options.log } : {}),
					...(options.fetch ? { fetch: options.fetch } : {}),
					...(options.now ? { now: options.now } : {}),
					...(options.sleep ? { sleep: options.sleep } : {}),
					...(options.uuid ? { uuid: options.uuid } : {}),
					...(options.client ? { client: options.client } : {})
				}
			)
	);
	let timer: ReturnType<typeof setTimeout> | null = null;
	if (options.durationS !== undefined && Number.isFinite(options.durationS) && options.durationS >= 0) {
		timer = setTimeout(() => controller.abort(), options.durationS * 1000);
	}
	const done = Promise.all(stations.map((s) => s.run())).then(() => {
		if (timer !== null) clearTimeout(timer);
		return collect(stations);
	});
	return {
		stop() {
			controller.abort();
			return done;
		},
		stats: () => collect(stations),
		done
	};
}

/** Parses `kind[@station-or-lot,...][=value]`, `offline` taking `=from..to` seconds; null when unreadable. */
export function parseFault(text: string): FaultSpec | null {
	const match = /^([a-z]+)(?:@([^=]+))?(?:=(.+))?$/.exec(text.trim());
	if (!match) return null;
	const kind = FAULT_KINDS.find((k) => k === match[1]);
	if (kind === undefined) return null;
	const targets = (match[2] ?? '')
		.split(',')
		.map((s) => s.trim())
		.filter((s) => s.length > 0);
	const raw = match[3];
	const fault: FaultSpec = { kind, targets };
	if (raw === undefined) return fault;
	if (kind === 'offline') {
		const window = /^(\d+(?:\.\d+)?)\.\.(\d+(?:\.\d+)?)$/.exec(raw);
		if (!window) return null;
		const fromS = Number(window[1]);
		const toS = Number(window[2]);
		if (!(toS > fromS)) return null;
		fault.window = { fromS, toS };
		return fault;
	}
	const value = Number(raw);
	if (!Number.isFinite(value)) return null;
	if (kind === 'malformed' && !(value >= 0 && value <= 1)) return null;
	fault.value = value;
	return fault;
}

/** Parses station tokens (`[{ name, token, lot, product }]`); a typed error for anything else. */
export function parseTokens(text: string): { ok: true; tokens: StationToken[] } | { ok: false; message: string } {
	let data: unknown;
	try {
		data = JSON.parse(text);
	} catch (err) {
		return { ok: false, message: `tokens are not JSON: ${err instanceof Error ? err.message : String(err)}` };
	}
	if (!Array.isArray(data)) return { ok: false, message: 'tokens must be a JSON array of { name, token, lot, product }' };
	const tokens: StationToken[] = [];
	const names = new Set<string>();
	for (const [i, entry] of data.entries()) {
		if (typeof entry !== 'object' || entry === null) return { ok: false, message: `tokens[${i}] is not an object` };
		const e = entry as Record<string, unknown>;
		if (typeof e.name !== 'string' || e.name.length === 0) return { ok: false, message: `tokens[${i}].name must be a non-empty string` };
		if (typeof e.token !== 'string' || e.token.length === 0) return { ok: false, message: `tokens[${i}].token must be a non-empty string` };
		if (typeof e.lot !== 'string' || e.lot.length === 0) return { ok: false, message: `tokens[${i}].lot must be a non-empty string` };
		if (e.product !== undefined && e.product !== null && typeof e.product !== 'string') return { ok: false, message: `tokens[${i}].product must be a string` };
		if (names.has(e.name)) return { ok: false, message: `station name ${e.name} appears twice` };
		names.add(e.name);
		tokens.push({ name: e.name, token: e.token, lot: e.lot, product: typeof e.product === 'string' ? e.product : null });
	}
	return { ok: true, tokens };
}

/** One compact status line for a station. */
export function formatStationLine(s: StationStats): string {
	const bins = Object.entries(s.bins)
		.sort(([a], [b]) => a.localeCompare(b, 'en', { numeric: true }))
		.map(([bin, n]) => `${bin}:${n}`)
		.join(' ');
	return `${s.name.padEnd(8)} ${s.lot.padEnd(10)} posted ${s.posted} ack ${s.acknowledged} ref ${s.references} bins [${bins}] retries ${s.retries} errors ${s.errors} rejected ${s.rejected} cal ${s.calibrations}${s.offline ? ' OFFLINE' : ''}`;
}
