/**
 * One simulated test station: calibrates when needed, tests parts of its lot at a steady rate,
 * posts them in batches, measures its reference part on a schedule, and misbehaves on request
 * (fault switches). Time and sleeping are injected so tests can run it on a virtual clock.
 */
import { StationClient, abortableSleep, type Logger, type ResultUnit, type ResultsBatch, type StationInfo, type StationStudy } from './client';
import {
	DEFAULT_BIAS_POINTS_V,
	REFERENCE_CAPACITORS_F,
	ambientTemperatureC,
	junctionCapacitanceF,
	measureReferences,
	measureUnit,
	modelForProduct,
	sampleLotParams,
	samplePart,
	type Fixture,
	type JunctionParams,
	type Part,
	type ProductModel
} from './physics';
import { createRng, type Rng } from './rng';

export type FaultKind = 'drift' | 'badlot' | 'noisy' | 'malformed' | 'offline';

/**
 * A fault switch. `targets` are station names or lot numbers it applies to (empty: every station).
 * `value`: drift ppm/min of fixture L (default 20), badlot Cj0 shift % (default +8), noisy noise
 * factor (default 10), malformed fraction of batches (default 0.05). `window`: offline period in
 * seconds after the station starts (default 30..90).
 */
export interface FaultSpec {
	kind: FaultKind;
	targets: string[];
	value?: number;
	window?: { fromS: number; toS: number };
}

export interface StationConfig {
	name: string;
	token: string;
	lot: string;
	product?: string | null;
	baseUrl: string;
	/** Parts per second. */
	rate: number;
	batchMin: number;
	batchMax: number;
	/** Reference part every N production parts (null: not by count). */
	refEveryParts: number | null;
	/** Reference part every N minutes (null: not by time). */
	refEveryMin: number | null;
	seed: number | string;
	faults: FaultSpec[];
	serialStart?: number;
	/** Frequency reading noise, ppm (one standard deviation). */
	frequencyNoisePpm?: number;
	bandwidthNoisePct?: number;
	/** Recalibrate this long before `validUntil`. */
	calibrationMarginMs?: number;
	/** Re-read `GET /api/v1/station` this often (plan changes). */
	refreshEveryMs?: number;
}

export interface StationDeps {
	now?: () => number;
	sleep?: (ms: number, signal?: AbortSignal) => Promise<void>;
	fetch?: typeof fetch;
	uuid?: () => string;
	log?: Logger;
	signal: AbortSignal;
	/** Passed to the client (attempts, backoff); tests shorten them. */
	client?: { maxAttempts?: number; maxTotalMs?: number; baseBackoffMs?: number; maxBackoffMs?: number; requestTimeoutMs?: number };
}

export interface StationStats {
	name: string;
	lot: string;
	/** Units sent (production and reference), counted once per batch however often it was retried. */
	posted: number;
	/** Units the server answered with a result. */
	acknowledged: number;
	references: number;
	replayed: number;
	bins: Record<string, number>;
	retries: number;
	errors: number;
	rejected: number;
	malformedSent: number;
	calibrations: number;
	offline: boolean;
	lastError: string | null;
}

/** Fixture when the server does not describe one: 100 µH, 3 pF stray, 100 nF blocking, one part. */
export const DEFAULT_FIXTURE: Fixture = { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' };

function applies(fault: FaultSpec, config: StationConfig): boolean {
	return fault.targets.length === 0 || fault.targets.includes(config.name) || fault.targets.includes(config.lot);
}

/** Faults of one kind that apply to this station (by name or by lot). */
export function faultsFor(config: StationConfig, kind: FaultKind): FaultSpec[] {
	return config.faults.filter((f) => f.kind === kind && applies(f, config));
}

type Corruption = (batch: Record<string, unknown>, rng: Rng) => void;

function firstUnit(batch: Record<string, unknown>): Record<string, unknown> | null {
	const units = batch.units;
	if (!Array.isArray(units)) return null;
	const unit: unknown = units[0];
	return typeof unit === 'object' && unit !== null ? (unit as Record<string, unknown>) : null;
}

function firstPoint(batch: Record<string, unknown>): Record<string, unknown> | null {
	const points = firstUnit(batch)?.points;
	if (!Array.isArray(points)) return null;
	const point: unknown = points[0];
	return typeof point === 'object' && point !== null ? (point as Record<string, unknown>) : null;
}

/** The ways a station's firmware could get a payload wrong. */
const CORRUPTIONS: readonly Corruption[] = [
	(b) => {
		delete b.lot;
	},
	(b) => {
		const p = firstPoint(b);
		if (p) p.resonanceHz = -Math.abs(Number(p.resonanceHz));
	},
	(b) => {
		const p = firstPoint(b);
		if (p) p.resonanceHz = String(p.resonanceHz);
	},
	(b) => {
		const u = firstUnit(b);
		if (u) u.points = [];
	},
	(b) => {
		const u = firstUnit(b);
		if (u) u.serial = '';
	},
	(b) => {
		const p = firstPoint(b);
		// JSON has no NaN; a NaN reading serialises as null.
		if (p) p.biasV = null;
	},
	(b) => {
		b.units = [];
	},
	(b) => {
		const u = firstUnit(b);
		if (u) u.kind = 'bogus';
	}
];

/** A deliberately malformed copy of a batch; assumes the batch is plain JSON data. */
export function corruptBatch(batch: ResultsBatch, rng: Rng): Record<string, unknown> {
	const copy = JSON.parse(JSON.stringify(batch)) as Record<string, unknown>;
	const corruption = CORRUPTIONS[rng.int(0, CORRUPTIONS.length - 1)];
	corruption?.(copy, rng);
	return copy;
}

interface Pending {
	body: ResultsBatch | Record<string, unknown>;
	key: string;
	units: number;
	malformed: boolean;
}

/**
 * One station's loop; assumes `deps.signal` is the only way to stop it and that `config.rate` > 0.
 * `run()` resolves once stopped and never rejects.
 */
export class Station {
	readonly config: StationConfig;
	readonly #deps: StationDeps;
	readonly #now: () => number;
	readonly #sleep: (ms: number, signal?: AbortSignal) => Promise<void>;
	readonly #client: StationClient;
	readonly #partRng: Rng;
	readonly #noiseRng: Rng;
	readonly #faultRng: Rng;
	readonly #batchRng: Rng;
	readonly #stats: StationStats;
	#startMs = 0;
	#info: StationInfo | null = null;
	#lastRefreshMs = 0;
	#calibration: { validUntilMs: number | null; atMs: number } | null = null;
	#model: ProductModel | null = null;
	#lotParams: JunctionParams | null = null;
	#referencePart: Part | null = null;
	#trueFixture: Fixture = DEFAULT_FIXTURE;
	#biasPointsV: number[] = [...DEFAULT_BIAS_POINTS_V];
	#serial: number;
	#partsSinceRef = Number.POSITIVE_INFINITY;
	#lastRefMs = Number.NEGATIVE_INFINITY;
	#nextPartMs = 0;
	#pending: Pending | null = null;

	constructor(config: StationConfig, deps: StationDeps) {
		this.config = config;
		this.#deps = deps;
		this.#now = deps.now ?? (() => Date.now());
		this.#sleep = deps.sleep ?? abortableSleep;
		const root = `${String(config.seed)}|station|${config.name}`;
		this.#partRng = createRng(`${root}|parts`);
		this.#noiseRng = createRng(`${root}|noise`);
		this.#faultRng = createRng(`${root}|faults`);
		this.#batchRng = createRng(`${root}|batch`);
		this.#serial = config.serialStart ?? 1;
		this.#stats = {
			name: config.name,
			lot: config.lot,
			posted: 0,
			acknowledged: 0,
			references: 0,
			replayed: 0,
			bins: {},
			retries: 0,
			errors: 0,
			rejected: 0,
			malformedSent: 0,
			calibrations: 0,
			offline: false,
			lastError: null
		};
		const clientOptions = {
			baseUrl: config.baseUrl,
			token: config.token,
			rng: createRng(`${root}|jitter`),
			now: this.#now,
			sleep: this.#sleep,
			signal: deps.signal,
			log: (level: 'info' | 'warn' | 'error', message: string, details?: Record<string, unknown>) => this.#log(level, message, details),
			onRetry: () => {
				this.#stats.retries += 1;
			},
			...(deps.fetch ? { fetch: deps.fetch } : {}),
			...(deps.uuid ? { uuid: deps.uuid } : {}),
			...(deps.client ?? {})
		};
		this.#client = new StationClient(clientOptions);
	}

	/** A copy of this station's counters. */
	stats(): StationStats {
		return { ...this.#stats, bins: { ...this.#stats.bins } };
	}

	/** Runs until the signal aborts; never rejects. */
	async run(): Promise<void> {
		try {
			await this.#loop();
		} catch (err) {
			this.#stats.errors += 1;
			this.#stats.lastError = err instanceof Error ? err.message : String(err);
			this.#log('error', `station loop ended: ${this.#stats.lastError}`);
		}
	}

	get #stopped(): boolean {
		return this.#deps.signal.aborted;
	}

	#log(level: 'info' | 'warn' | 'error', message: string, details?: Record<string, unknown>): void {
		this.#deps.log?.(level, `[${this.config.name}] ${message}`, details);
	}

	#error(message: string): void {
		this.#stats.errors += 1;
		this.#stats.lastError = message;
	}

	async #loop(): Promise<void> {
		this.#startMs = this.#now();
		this.#nextPartMs = this.#startMs;
		// Until the server answers: a bad token or a server still starting should not flood the log.
		let waitMs = 2000;
		while (!this.#stopped && !(await this.#refresh())) {
			await this.#sleep(waitMs, this.#deps.signal);
			waitMs = Math.min(30_000, waitMs * 2);
		}
		while (!this.#stopped) {
			if (await this.#offlinePause()) continue;
			if (this.#pending) {
				await this.#deliver(this.#pending);
				continue;
			}
			if (this.#now() - this.#lastRefreshMs >= (this.config.refreshEveryMs ?? 60_000)) await this.#refresh();
			if (this.#needsCalibration()) {
				if (!(await this.#calibrate())) {
					await this.#sleep(2000, this.#deps.signal);
					continue;
				}
			}
			if (this.#info?.study?.next) {
				await this.#measureStudyPart(this.#info.study);
				continue;
			}
			const batch = this.#testBatch();
			await this.#sleep(Math.max(0, this.#nextPartMs - this.#now()), this.#deps.signal);
			if (this.#stopped) break;
			// A batch can outlast the calibration it started under; renew before the server refuses it.
			if (this.#needsCalibration()) await this.#calibrate();
			const malformedFraction = faultsFor(this.config, 'malformed').reduce((acc, f) => Math.max(acc, f.value ?? 0.05), 0);
			const malformed = malformedFraction > 0 && this.#faultRng.next() < malformedFraction;
			const body = malformed ? corruptBatch(batch, this.#faultRng) : batch;
			if (malformed) this.#stats.malformedSent += 1;
			this.#stats.posted += batch.units.length;
			// A fresh key per batch, kept with it until it is delivered or given up.
			const key = this.#deps.uuid ? this.#deps.uuid() : crypto.randomUUID();
			await this.#deliver({ body, key, units: batch.units.length, malformed });
		}
	}

	/** True while the station is in an offline window (it then sends nothing at all). */
	async #offlinePause(): Promise<boolean> {
		const elapsedS = (this.#now() - this.#startMs) / 1000;
		for (const fault of faultsFor(this.config, 'offline')) {
			const { fromS, toS } = fault.window ?? { fromS: 30, toS: 90 };
			if (elapsedS >= fromS && elapsedS < toS) {
				if (!this.#stats.offline) this.#log('warn', `offline until t+${toS}s`);
				this.#stats.offline = true;
				await this.#sleep((toS - elapsedS) * 1000, this.#deps.signal);
				// Parts are not tested while the station is down; resume the schedule from now.
				this.#nextPartMs = this.#now();
				return true;
			}
		}
		if (this.#stats.offline) this.#log('info', 'back online');
		this.#stats.offline = false;
		return false;
	}

	async #deliver(pending: Pending): Promise<void> {
		const answer = await this.#client.postResults(pending.body, { idempotencyKey: pending.key, recalibrate: () => this.#calibrate() });
		if (answer.ok) {
			this.#pending = null;
			this.#stats.acknowledged += answer.value.results.length;
			if (answer.value.replayed) this.#stats.replayed += 1;
			for (const r of answer.value.results) this.#stats.bins[r.bin] = (this.#stats.bins[r.bin] ?? 0) + 1;
			return;
		}
		const { error } = answer;
		if (error.code === 'stopped') {
			this.#pending = null;
			return;
		}
		if (error.code === 'gave-up' || error.code === 'network') {
			// Keep the batch and its key: a later success may be a replay of an answer already stored.
			this.#pending = pending;
			this.#error(error.message);
			await this.#sleep(Math.max(error.retryAfterMs ?? 0, 2000), this.#deps.signal);
			return;
		}
		this.#pending = null;
		this.#error(error.message);
		if (error.status !== undefined && error.status >= 400 && error.status < 500) this.#stats.rejected += 1;
		if (!pending.malformed && error.code === 'rejected') this.#log('warn', 'a well-formed batch was rejected', { errors: error.problem?.errors });
		if (error.code === 'calibration-required') this.#calibration = null;
		if (error.code === 'unauthorized' || error.code === 'forbidden') await this.#sleep(10_000, this.#deps.signal);
	}

	async #refresh(): Promise<boolean> {
		const answer = await this.#client.getStation();
		this.#lastRefreshMs = this.#now();
		if (!answer.ok) {
			if (answer.error.code !== 'stopped') this.#error(answer.error.message);
			return this.#info !== null;
		}
		const first = this.#info === null;
		this.#info = answer.value;
		const info = answer.value;
		const planPoints = info.plan?.points ?? [];
		const biases = [...new Set(planPoints.map((p) => p.biasV))].filter((v) => Number.isFinite(v) && v >= 0);
		this.#biasPointsV = biases.length > 0 ? biases : [...DEFAULT_BIAS_POINTS_V];
		// The server's word on the calibration in force wins, including "none" (revoked or expired).
		this.#calibration = info.calibration ? { validUntilMs: parseTime(info.calibration.validUntil), atMs: parseTime(info.calibration.at) ?? this.#now() } : null;
		if (first) this.#setUp(info);
		return true;
	}

	#setUp(info: StationInfo): void {
		const code = this.config.product ?? info.productCode;
		const model = modelForProduct(code, info.plan?.points);
		this.#model = model;
		const shift = faultsFor(this.config, 'badlot').reduce((acc, f) => acc + (f.value ?? 8), 0);
		// The lot and the reference part are physical things: their parameters depend on the lot
		// (or the station) only, not on the run's seed, so every station testing a lot sees the same
		// lot and a restarted simulator tests the same lot and reference part as before (a new seed
		// at each start would step every chart and raise alarms). The seed drives the readings.
		this.#lotParams = sampleLotParams(model, createRng(`lot|${this.config.lot}|${model.code}`), shift);
		const refModel: ProductModel = { ...model, leakage: { ...model.leakage, outlierProbability: 0 } };
		this.#referencePart = samplePart(refModel, model.nominal, createRng(`reference|${this.config.name}`));
		const nominal = info.fixture ?? DEFAULT_FIXTURE;
		// The real fixture differs a little from its record; calibration is what finds out by how much.
		const fixtureRng = createRng(`${String(this.config.seed)}|fixture|${this.config.name}`);
		this.#trueFixture = {
			...nominal,
			inductanceH: nominal.inductanceH * (1 + 0.003 * fixtureRng.normal()),
			strayF: Math.max(0, nominal.strayF * (1 + 0.05 * fixtureRng.normal()))
		};
		for (const p of info.plan?.points ?? []) {
			const c = junctionCapacitanceF(model.nominal, p.biasV);
			if (!c.ok) continue;
			const low = p.minF ?? null;
			const high = p.maxF ?? null;
			if ((low !== null && c.value < low) || (high !== null && c.value > high)) {
				this.#log('warn', `model ${model.code} nominal C at ${p.biasV} V (${(c.value * 1e12).toFixed(2)} pF) is outside the plan limits`);
			}
		}
	}

	#fixtureNow(): Fixture {
		const elapsedMin = (this.#now() - this.#startMs) / 60_000;
		const ppmPerMin = faultsFor(this.config, 'drift').reduce((acc, f) => acc + (f.value ?? 20), 0);
		return { ...this.#trueFixture, inductanceH: this.#trueFixture.inductanceH * (1 + ppmPerMin * 1e-6 * elapsedMin) };
	}

	#noiseFactor(): number {
		return faultsFor(this.config, 'noisy').reduce((acc, f) => acc * (f.value ?? 10), 1);
	}

	#needsCalibration(): boolean {
		const cal = this.#calibration;
		if (cal === null) return true;
		if (cal.validUntilMs === null) return false;
		const lifetimeMs = Math.max(0, cal.validUntilMs - cal.atMs);
		const margin = Math.min(this.config.calibrationMarginMs ?? 60_000, lifetimeMs / 10);
		return this.#now() >= cal.validUntilMs - margin;
	}

	/** Measures the reference capacitors and posts them; true when a calibration is in force afterwards. */
	async #calibrate(): Promise<boolean> {
		const readings = measureReferences(this.#fixtureNow(), REFERENCE_CAPACITORS_F, (this.config.frequencyNoisePpm ?? 5) * this.#noiseFactor(), this.#noiseRng);
		if (!readings.ok) {
			this.#error(readings.error.message);
			return false;
		}
		const answer = await this.#client.calibrate(readings.value);
		if (!answer.ok) {
			if (answer.error.code !== 'stopped') this.#error(answer.error.message);
			return false;
		}
		this.#stats.calibrations += 1;
		this.#calibration = { validUntilMs: parseTime(answer.value.validUntil), atMs: this.#now() };
		this.#log('info', `calibrated: L ${answer.value.inductanceH.toExponential(5)} H, stray ${answer.value.strayF.toExponential(3)} F${answer.value.residualPpm !== null ? `, residual ${answer.value.residualPpm.toFixed(1)} ppm` : ''}`);
		return true;
	}

	#referenceDue(): boolean {
		const { refEveryParts, refEveryMin } = this.config;
		if (refEveryParts === null && refEveryMin === null) return false;
		if (refEveryParts !== null && this.#partsSinceRef >= refEveryParts) return true;
		if (refEveryMin !== null && this.#nextPartMs - this.#lastRefMs >= refEveryMin * 60_000) return true;
		return false;
	}

	/**
	 * Measures the study part the server named and posts it with `study`, then asks for the next.
	 * The part is drawn from the seed, its lot and its serial only, so every station (and every
	 * trial) measures the same simulated part: only the readings' noise differs, as on a real line.
	 */
	async #measureStudyPart(study: StationStudy): Promise<void> {
		const next = study.next;
		if (!next) return;
		const model = modelForProduct(study.productCode ?? this.config.product, null);
		const seed = String(this.config.seed);
		const lotParams = sampleLotParams(model, createRng(`lot|${next.lot}|${model.code}`));
		const part = samplePart(model, lotParams, createRng(`${seed}|study-part|${next.serial}`));
		const periodMs = 1000 / Math.max(1e-6, this.config.rate);
		this.#nextPartMs = Math.max(this.#nextPartMs, this.#now()) + periodMs;
		await this.#sleep(Math.max(0, this.#nextPartMs - this.#now()), this.#deps.signal);
		if (this.#stopped) return;
		if (this.#needsCalibration()) await this.#calibrate();
		const biases = study.biasV.length > 0 ? study.biasV : this.#biasPointsV;
		const elapsedMin = (this.#now() - this.#startMs) / 60_000;
		const measured = measureUnit(
			model,
			part,
			biases,
			{
				fixture: this.#fixtureNow(),
				temperatureC: ambientTemperatureC(elapsedMin, this.#noiseRng),
				frequencyNoisePpm: (this.config.frequencyNoisePpm ?? 5) * this.#noiseFactor(),
				bandwidthNoisePct: (this.config.bandwidthNoisePct ?? 1.5) * this.#noiseFactor()
			},
			this.#noiseRng
		);
		if (!measured.ok) {
			this.#error(measured.error.message);
			await this.#sleep(2000, this.#deps.signal);
			return;
		}
		const batch: ResultsBatch = { lot: next.lot, study: study.id, units: [{ serial: next.serial, testedAt: new Date(this.#now()).toISOString(), kind: 'production', ...round(measured.value) }] };
		this.#stats.posted += 1;
		await this.#deliver({ body: batch, key: this.#deps.uuid ? this.#deps.uuid() : crypto.randomUUID(), units: 1, malformed: false });
		// The server decides the next cell (and says when the study is no longer running).
		await this.#refresh();
	}

	/** Tests the next batch of parts, advancing the part schedule by 1/rate per part. */
	#testBatch(): ResultsBatch {
		const model = this.#model ?? modelForProduct(this.config.product, null);
		const lotParams = this.#lotParams ?? model.nominal;
		const size = this.#batchRng.int(Math.max(1, this.config.batchMin), Math.max(1, this.config.batchMax, this.config.batchMin));
		const periodMs = 1000 / Math.max(1e-6, this.config.rate);
		// After a long outage, do not try to catch up on parts that were never tested.
		if (this.#now() - this.#nextPartMs > 5000) this.#nextPartMs = this.#now();
		const units: ResultUnit[] = [];
		const noise = this.#noiseFactor();
		while (units.length < size) {
			this.#nextPartMs += periodMs;
			const reference = this.#referenceDue();
			const part = reference && this.#referencePart ? this.#referencePart : samplePart(model, lotParams, this.#partRng);
			const elapsedMin = (this.#nextPartMs - this.#startMs) / 60_000;
			const measured = measureUnit(
				model,
				part,
				this.#biasPointsV,
				{
					fixture: this.#fixtureNow(),
					temperatureC: ambientTemperatureC(elapsedMin, this.#noiseRng),
					frequencyNoisePpm: (this.config.frequencyNoisePpm ?? 5) * noise,
					bandwidthNoisePct: (this.config.bandwidthNoisePct ?? 1.5) * noise
				},
				this.#noiseRng
			);
			if (!measured.ok) {
				this.#error(measured.error.message);
				continue;
			}
			const testedAt = new Date(this.#nextPartMs).toISOString();
			if (reference) {
				this.#partsSinceRef = 0;
				this.#lastRefMs = this.#nextPartMs;
				this.#stats.references += 1;
				units.push({ serial: `REF-${this.config.name}`, testedAt, kind: 'reference', ...round(measured.value) });
			} else {
				this.#partsSinceRef += 1;
				const serial = `${this.config.lot}-${this.config.name}-${String(this.#serial).padStart(6, '0')}`;
				this.#serial += 1;
				units.push({ serial, testedAt, kind: 'production', ...round(measured.value) });
			}
		}
		return { lot: this.config.lot, units };
	}
}

/** Readings at the resolution a frequency counter and meters would print. */
function round(unit: { temperatureC: number; leakageA: number; points: { biasV: number; resonanceHz: number; bandwidthHz: number }[] }): Pick<ResultUnit, 'temperatureC' | 'leakageA' | 'points'> {
	return {
		temperatureC: Math.round(unit.temperatureC * 100) / 100,
		leakageA: Number(unit.leakageA.toPrecision(4)),
		points: unit.points.map((p) => ({ biasV: p.biasV, resonanceHz: Math.round(p.resonanceHz * 1000) / 1000, bandwidthHz: Number(p.bandwidthHz.toPrecision(5)) }))
	};
}

function parseTime(text: string | null): number | null {
	if (text === null) return null;
	const ms = Date.parse(text);
	return Number.isNaN(ms) ? null : ms;
}

