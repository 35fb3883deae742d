/**
 * HTTP client of one simulated station, per the Biasline public interface (Stations section).
 *
 * Retry policy:
 * - Network errors, timeouts, 5xx and 429 are retried with the SAME Idempotency-Key, waiting the
 *   server's Retry-After (seconds or HTTP date) when given, else exponential backoff with full
 *   jitter from the seeded PRNG; attempts and total time are bounded.
 * - Any other 4xx is final and is logged with the problem document's `errors`.
 * - A 409 is split by its problem document: a `type` or `title` mentioning "idempotency"
 *   (we expect a type URI ending in `idempotency-conflict`) is final; one mentioning "calibration"
 *   (we expect `calibration-required`) triggers the caller's recalibration, then ONE more post of
 *   the SAME body under a NEW key. Same body, because the raw resonances do not depend on the
 *   calibration (the server converts them with the calibration in force when it receives them);
 *   new key, because a server may have stored the 409 answer under the old key and would replay
 *   it, and a rejected request stored nothing, so a new key cannot duplicate a result.
 *   Any other 409 (a closed lot, say) is final.
 */
import type { Rng } from './rng';
import type { Fixture, MeasuredPoint, PlanPoint, ReferenceReading } from './physics';

export interface ProblemDocument {
	type?: string;
	title?: string;
	status?: number;
	detail?: string;
	errors?: { path: string; message: string }[];
}

export type ClientErrorCode =
	| 'network'
	| 'gave-up'
	| 'stopped'
	| 'unauthorized'
	| 'forbidden'
	| 'not-found'
	| 'rejected'
	| 'too-large'
	| 'calibration-required'
	| 'idempotency-conflict'
	| 'conflict'
	| 'bad-response';

export interface ClientError {
	code: ClientErrorCode;
	message: string;
	status?: number;
	problem?: ProblemDocument;
	/** For `gave-up` after a 429/503: how long the server asked us to wait. */
	retryAfterMs?: number;
}

export type ClientResult<T> = { ok: true; value: T; status: number; attempts: number } | { ok: false; error: ClientError; attempts: number };

export interface Calibration {
	inductanceH: number;
	strayF: number;
	at: string | null;
	validUntil: string | null;
}

export interface StationPlan {
	points: PlanPoint[];
	leakageBiasV: number | null;
	raw: Record<string, unknown>;
}

export interface StationInfo {
	station: Record<string, unknown>;
	fixture: Fixture | null;
	calibration: Calibration | null;
	plan: StationPlan | null;
	/** Product code if the server names one (in `plan`, `station` or a `product` object). */
	productCode: string | null;
	/** Lot number if the server names one. */
	lotNumber: string | null;
	/** The running measurement-system study this station takes part in (null: none). */
	study: StationStudy | null;
}

/** What `GET /api/v1/station` says about a running study: the part to measure next, or null when this station's share is done. */
export interface StationStudy {
	id: number;
	productCode: string | null;
	next: { serial: string; lot: string; trial: number } | null;
	biasV: number[];
}

export interface CalibrationAnswer {
	inductanceH: number;
	strayF: number;
	residualPpm: number | null;
	validUntil: string | null;
}

export interface ResultUnit {
	serial: string;
	testedAt: string;
	kind: 'production' | 'reference';
	temperatureC: number;
	leakageA: number;
	points: MeasuredPoint[];
}

export interface ResultsBatch {
	lot: string;
	/** Set for a study's measurements (the server stores them apart from production). */
	study?: number;
	units: ResultUnit[];
}

export interface UnitAnswer {
	serial: string;
	bin: string;
	pass: boolean;
	raw: Record<string, unknown>;
}

export interface PostAnswer {
	results: UnitAnswer[];
	replayed: boolean;
	idempotencyKey: string;
	recalibrated: boolean;
}

export type LogLevel = 'info' | 'warn' | 'error';
export type Logger = (level: LogLevel, message: string, details?: Record<string, unknown>) => void;

export interface ClientOptions {
	baseUrl: string;
	token: string;
	rng: Rng;
	fetch?: typeof fetch;
	/** Resolves after ms, or early when the signal aborts (never rejects). */
	sleep?: (ms: number, signal?: AbortSignal) => Promise<void>;
	now?: () => number;
	uuid?: () => string;
	maxAttempts?: number;
	maxTotalMs?: number;
	baseBackoffMs?: number;
	maxBackoffMs?: number;
	requestTimeoutMs?: number;
	signal?: AbortSignal;
	log?: Logger;
	/** Called before each retry (for statistics). */
	onRetry?: (reason: string) => void;
}

/** Resolves after ms or as soon as the signal aborts; assumes ms >= 0. */
export function abortableSleep(ms: number, signal?: AbortSignal): Promise<void> {
	return new Promise((resolve) => {
		if (signal?.aborted) {
			resolve();
			return;
		}
		const timer = setTimeout(done, Math.max(0, ms));
		function done(): void {
			clearTimeout(timer);
			signal?.removeEventListener('abort', done);
			resolve();
		}
		signal?.addEventListener('abort', done, { once: true });
	});
}

/** Retry-After as milliseconds: delta-seconds or an HTTP date (RFC 9110 §10.2.3); null when absent or unreadable. */
export function parseRetryAfterMs(header: string | null, nowMs: number): number | null {
	if (header === null) return null;
	const text = header.trim();
	if (/^\d+$/.test(text)) return Number(text) * 1000;
	// All three HTTP-date forms start with a day name; Date.parse alone would read "-1" as a year.
	if (!/^[A-Za-z]{3}/.test(text)) return null;
	const dateMs = Date.parse(text);
	if (Number.isNaN(dateMs)) return null;
	return Math.max(0, dateMs - nowMs);
}

/** Which kind of 409 a problem document describes; assumes the naming documented at the top of this file. */
export function classifyConflict(problem: ProblemDocument | undefined): 'calibration-required' | 'idempotency-conflict' | 'conflict' {
	const text = `${problem?.type ?? ''} ${problem?.title ?? ''}`.toLowerCase();
	if (text.includes('idempoten')) return 'idempotency-conflict';
	if (text.includes('calibrat')) return 'calibration-required';
	const detail = (problem?.detail ?? '').toLowerCase();
	if (detail.includes('idempoten')) return 'idempotency-conflict';
	if (detail.includes('calibrat')) return 'calibration-required';
	return 'conflict';
}

function isRecord(x: unknown): x is Record<string, unknown> {
	return typeof x === 'object' && x !== null && !Array.isArray(x);
}

function num(x: unknown): number | null {
	return typeof x === 'number' && Number.isFinite(x) ? x : null;
}

function str(x: unknown): string | null {
	return typeof x === 'string' ? x : null;
}

function parseProblem(body: unknown): ProblemDocument | undefined {
	if (!isRecord(body)) return undefined;
	const problem: ProblemDocument = {};
	const type = str(body.type);
	if (type !== null) problem.type = type;
	const title = str(body.title);
	if (title !== null) problem.title = title;
	const status = num(body.status);
	if (status !== null) problem.status = status;
	const detail = str(body.detail);
	if (detail !== null) problem.detail = detail;
	if (Array.isArray(body.errors)) {
		problem.errors = body.errors.filter(isRecord).map((e) => ({ path: String(e.path ?? ''), message: String(e.message ?? '') }));
	}
	return problem;
}

function parseFixture(x: unknown): Fixture | null {
	if (!isRecord(x)) return null;
	const inductanceH = num(x.inductanceH);
	const strayF = num(x.strayF);
	const blockingF = x.blockingF === null || x.blockingF === undefined ? null : num(x.blockingF);
	const arrangement = x.arrangement === 'parallel2' || x.arrangement === 'antiseries2' ? x.arrangement : 'single';
	if (inductanceH === null || strayF === null) return null;
	return { inductanceH, strayF, blockingF, arrangement };
}

/** The lenient reading of `GET /api/v1/station`'s answer; assumes the contract's shape, tolerating extra or missing fields. */
export function parseStationInfo(body: unknown): StationInfo | null {
	if (!isRecord(body)) return null;
	const station = isRecord(body.station) ? body.station : {};
	let calibration: Calibration | null = null;
	if (isRecord(body.calibration)) {
		const inductanceH = num(body.calibration.inductanceH);
		const strayF = num(body.calibration.strayF);
		if (inductanceH !== null && strayF !== null) {
			calibration = { inductanceH, strayF, at: str(body.calibration.at), validUntil: str(body.calibration.validUntil) };
		}
	}
	let plan: StationPlan | null = null;
	if (isRecord(body.plan)) {
		const points: PlanPoint[] = [];
		if (Array.isArray(body.plan.points)) {
			for (const p of body.plan.points) {
				if (!isRecord(p)) continue;
				const biasV = num(p.biasV);
				if (biasV === null) continue;
				points.push({ biasV, minF: num(p.minF), maxF: num(p.maxF) });
			}
		}
		const leakageBiasV = isRecord(body.plan.leakage) ? num(body.plan.leakage.biasV) : null;
		plan = { points, leakageBiasV, raw: body.plan };
	}
	const product = isRecord(body.product) ? body.product : null;
	const lot = isRecord(body.lot) ? body.lot : null;
	const productCode =
		str(product?.code) ?? str(body.plan && isRecord(body.plan) ? body.plan.productCode : undefined) ?? str(station.productCode) ?? str(lot?.productCode);
	const lotNumber = str(lot?.number) ?? str(station.lot) ?? str(station.lotNumber);
	return { station, fixture: parseFixture(body.fixture), calibration, plan, productCode, lotNumber, study: parseStudy(body.study) };
}

function parseStudy(x: unknown): StationStudy | null {
	if (!isRecord(x)) return null;
	const id = num(x.id);
	if (id === null) return null;
	const n = isRecord(x.next) ? x.next : null;
	const serial = str(n?.serial);
	const lot = str(n?.lot);
	const trial = num(n?.trial);
	const biasV = Array.isArray(x.biasV) ? x.biasV.map(num).filter((v): v is number => v !== null && v >= 0) : [];
	return { id, productCode: str(x.productCode), next: serial !== null && lot !== null && trial !== null ? { serial, lot, trial } : null, biasV };
}

function parseCalibrationAnswer(body: unknown): CalibrationAnswer | null {
	if (!isRecord(body)) return null;
	const inductanceH = num(body.inductanceH);
	const strayF = num(body.strayF);
	if (inductanceH === null || strayF === null) return null;
	return { inductanceH, strayF, residualPpm: num(body.residualPpm), validUntil: str(body.validUntil) };
}

function parseResults(body: unknown): UnitAnswer[] | null {
	if (!isRecord(body) || !Array.isArray(body.results)) return null;
	return body.results.filter(isRecord).map((r) => ({
		serial: String(r.serial ?? ''),
		bin: r.bin === undefined || r.bin === null ? '?' : String(r.bin),
		pass: r.pass === true,
		raw: r
	}));
}

interface RawResponse {
	status: number;
	headers: Headers;
	body: unknown;
}

type Attempted = { ok: true; response: RawResponse; attempts: number } | { ok: false; error: ClientError; attempts: number };

/** One station's connection to the server; assumes a base URL like `http://127.0.0.1:3000`. */
export class StationClient {
	readonly #options: Required<Omit<ClientOptions, 'signal' | 'log' | 'onRetry'>> & Pick<ClientOptions, 'signal' | 'log' | 'onRetry'>;

	constructor(options: ClientOptions) {
		this.#options = {
			fetch: globalThis.fetch.bind(globalThis),
			sleep: abortableSleep,
			now: () => Date.now(),
			uuid: () => crypto.randomUUID(),
			maxAttempts: 6,
			maxTotalMs: 60_000,
			baseBackoffMs: 250,
			maxBackoffMs: 10_000,
			requestTimeoutMs: 15_000,
			...options,
			baseUrl: options.baseUrl.replace(/\/+$/, '')
		};
	}

	/** `GET /api/v1/station`: this station, its fixture, calibration in force and plan. */
	async getStation(): Promise<ClientResult<StationInfo>> {
		const attempt = await this.#send('GET', '/api/v1/station', undefined, {});
		if (!attempt.ok) return attempt;
		const { response } = attempt;
		if (response.status !== 200) return this.#finalError(response, attempt.attempts, 'GET /api/v1/station');
		const info = parseStationInfo(response.body);
		if (info === null) return { ok: false, error: { code: 'bad-response', message: 'station answer is not an object', status: response.status }, attempts: attempt.attempts };
		return { ok: true, value: info, status: response.status, attempts: attempt.attempts };
	}

	/** `POST /api/v1/calibrations` with two or more reference readings. */
	async calibrate(references: readonly ReferenceReading[]): Promise<ClientResult<CalibrationAnswer>> {
		// No idempotency key in the contract here: a repeated calibration with the same readings is harmless.
		const attempt = await this.#send('POST', '/api/v1/calibrations', { references }, {});
		if (!attempt.ok) return attempt;
		const { response } = attempt;
		if (response.status !== 201 && response.status !== 200) return this.#finalError(response, attempt.attempts, 'POST /api/v1/calibrations');
		const answer = parseCalibrationAnswer(response.body);
		if (answer === null) return { ok: false, error: { code: 'bad-response', message: 'calibration answer lacks inductanceH/strayF', status: response.status }, attempts: attempt.attempts };
		return { ok: true, value: answer, status: response.status, attempts: attempt.attempts };
	}

	/**
	 * `POST /api/v1/results` under one Idempotency-Key reused across retries. `recalibrate` is called
	 * on a 409 calibration-required and should resolve true when a new calibration is in force.
	 * `body` is normally a ResultsBatch; any object is sent as is (the simulator's malformed payloads).
	 */
	async postResults(body: ResultsBatch | object, options: { idempotencyKey?: string; recalibrate?: () => Promise<boolean> } = {}): Promise<ClientResult<PostAnswer>> {
		let key = options.idempotencyKey ?? this.#options.uuid();
		let recalibrated = false;
		let attemptsTotal = 0;
		for (;;) {
			const attempt = await this.#send('POST', '/api/v1/results', body, { 'Idempotency-Key': key });
			attemptsTotal += attempt.attempts;
			if (!attempt.ok) return { ok: false, error: attempt.error, attempts: attemptsTotal };
			const { response } = attempt;
			if (response.status === 201 || response.status === 200) {
				const results = parseResults(response.body);
				if (results === null) return { ok: false, error: { code: 'bad-response', message: 'results answer lacks `results`', status: response.status }, attempts: attemptsTotal };
				const replayed = response.headers.get('idempotent-replayed') === 'true';
				return { ok: true, value: { results, replayed, idempotencyKey: key, recalibrated }, status: response.status, attempts: attemptsTotal };
			}
			if (response.status === 409) {
				const problem = parseProblem(response.body);
				const kind = classifyConflict(problem);
				if (kind === 'calibration-required' && !recalibrated && options.recalibrate) {
					this.#options.log?.('warn', 'results refused: no calibration in force; recalibrating', { problem });
					recalibrated = true;
					const done = await options.recalibrate();
					if (done && !this.#options.signal?.aborted) {
						key = this.#options.uuid();
						this.#options.onRetry?.('recalibrated');
						continue;
					}
				}
			}
			const final = this.#finalError(response, 0, 'POST /api/v1/results');
			return { ok: false, error: final.error, attempts: attemptsTotal };
		}
	}

	#finalError(response: RawResponse, attempts: number, what: string): { ok: false; error: ClientError; attempts: number } {
		const problem = parseProblem(response.body);
		const status = response.status;
		let code: ClientErrorCode;
		if (status === 401) code = 'unauthorized';
		else if (status === 403) code = 'forbidden';
		else if (status === 404) code = 'not-found';
		else if (status === 409) code = classifyConflict(problem);
		else if (status === 413) code = 'too-large';
		else if (status >= 400 && status < 500) code = 'rejected';
		else code = 'bad-response';
		const message = `${what} answered ${status}${problem?.title ? ` ${problem.title}` : ''}${problem?.detail ? `: ${problem.detail}` : ''}`;
		const error: ClientError = { code, message, status };
		if (problem) error.problem = problem;
		this.#options.log?.('error', message, problem?.errors ? { errors: problem.errors, type: problem.type } : { type: problem?.type });
		return { ok: false, error, attempts };
	}

	/** Sends with retries on network errors, 5xx and 429; returns the first other response. */
	async #send(method: string, path: string, body: unknown, extraHeaders: Record<string, string>): Promise<Attempted> {
		const o = this.#options;
		const startedMs = o.now();
		const payload = body === undefined ? undefined : JSON.stringify(body);
		let attempts = 0;
		for (;;) {
			if (o.signal?.aborted) return { ok: false, error: { code: 'stopped', message: 'stopped' }, attempts };
			attempts += 1;
			let retryReason: string;
			let retryAfterMs: number | null = null;
			let lastStatus: number | undefined;
			try {
				const timeout = AbortSignal.timeout(o.requestTimeoutMs);
				const signal = o.signal ? AbortSignal.any([timeout, o.signal]) : timeout;
				const headers: Record<string, string> = { Authorization: `Bearer ${o.token}`, Accept: 'application/json, application/problem+json', ...extraHeaders };
				if (payload !== undefined) headers['Content-Type'] = 'application/json';
				const init: RequestInit = { method, headers, signal };
				if (payload !== undefined) init.body = payload;
				const res = await o.fetch(`${o.baseUrl}${path}`, init);
				const text = await res.text();
				let parsed: unknown = null;
				if (text.length > 0) {
					try {
						parsed = JSON.parse(text);
					} catch {
						parsed = text;
					}
				}
				if (res.status !== 429 && res.status < 500) return { ok: true, response: { status: res.status, headers: res.headers, body: parsed }, attempts };
				lastStatus = res.status;
				retryAfterMs = parseRetryAfterMs(res.headers.get('retry-after'), o.now());
				retryReason = `${res.status}`;
			} catch (err) {
				if (o.signal?.aborted) return { ok: false, error: { code: 'stopped', message: 'stopped' }, attempts };
				retryReason = `network: ${err instanceof Error ? (err.cause instanceof Error ? err.cause.message : err.message) : String(err)}`;
			}
			const backoff = Math.min(o.maxBackoffMs, o.baseBackoffMs * 2 ** (attempts - 1));
			// Full jitter keeps many stations from retrying in lockstep after a shared outage.
			const delayMs = retryAfterMs ?? Math.round(o.rng.next() * backoff);
			const elapsedMs = o.now() - startedMs;
			if (attempts >= o.maxAttempts || elapsedMs + delayMs > o.maxTotalMs) {
				const error: ClientError = { code: lastStatus === undefined ? 'network' : 'gave-up', message: `${method} ${path}: gave up after ${attempts} attempt(s), last ${retryReason}` };
				if (lastStatus !== undefined) error.status = lastStatus;
				if (retryAfterMs !== null) error.retryAfterMs = retryAfterMs;
				o.log?.('warn', error.message);
				return { ok: false, error, attempts };
			}
			o.onRetry?.(retryReason);
			await o.sleep(delayMs, o.signal);
		}
	}
}
