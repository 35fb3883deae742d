/**
 * Command line of the station simulator:
 *   npx tsx station-sim/cli.ts --url http://127.0.0.1:3000 --tokens tokens.json --stations 6 --rate 5 \
 *     --batch 1..10 --ref-every 50 --fault drift@T-02=30 --fault offline@T-05=60..120 --duration 600 --seed 7
 * Tokens come from --tokens FILE or the env BIASLINE_SIM_TOKENS (JSON text, or a path to a file).
 */
import { readFileSync } from 'node:fs';
import { pathToFileURL } from 'node:url';
import type { FaultSpec } from './station';
import { formatStationLine, parseFault, parseTokens, runSimulation, type SimulationOptions, type SimulationStats } from './simulation';

export { runSimulation, parseFault, parseTokens, formatStationLine } from './simulation';
export type { SimulationOptions, SimulationStats, SimulationHandle, StationToken } from './simulation';

export const USAGE = `usage: npx tsx station-sim/cli.ts --url URL [--tokens FILE] [options]
  --url URL             server base URL (default http://127.0.0.1:3000)
  --tokens FILE         JSON [{ "name", "token", "lot", "product" }] (else env BIASLINE_SIM_TOKENS)
  --stations N          run the first N stations of the token list (default all)
  --rate R              parts per second per station (default 1)
  --batch A..B | N      units per request (default 1..10)
  --ref-every N | Nm    reference part every N parts and/or every N minutes, e.g. 50 or 10m or 50,10m (default 50)
  --fault SPEC          repeatable: drift|badlot|noisy|malformed|offline[@station-or-lot,...][=value]
                        drift=ppm/min (20)  badlot=Cj0 shift % (8)  noisy=noise factor (10)
                        malformed=fraction of batches (0.05)  offline=FROM..TO seconds (30..90)
  --duration S          stop after S seconds (default: run until SIGINT/SIGTERM)
  --seed S              PRNG seed (default 1)
  --serial-start N|auto first serial number (auto: from the clock, so a restart does not repeat serials)
  --noise-ppm P         frequency reading noise, ppm (default 5)
  --print-every S       status line interval, seconds (default 5)
  --quiet               only status lines and errors`;

export interface CliArgs {
	options: Omit<SimulationOptions, 'tokens'>;
	tokensFile: string | null;
	printEveryS: number;
	quiet: boolean;
}

/** Parses argv (without node and script); a typed error message for a bad flag. */
export function parseArgs(argv: readonly string[], nowMs: number): { ok: true; args: CliArgs } | { ok: false; message: string } {
	const options: Omit<SimulationOptions, 'tokens'> = { url: 'http://127.0.0.1:3000' };
	const faults: FaultSpec[] = [];
	let tokensFile: string | null = null;
	let printEveryS = 5;
	let quiet = false;
	const positive = (flag: string, v: string | undefined): number | string => {
		const n = Number(v);
		return v !== undefined && Number.isFinite(n) && n > 0 ? n : `${flag} needs a positive number, got ${String(v)}`;
	};
	for (let i = 0; i < argv.length; i += 1) {
		const flag = argv[i];
		const value = argv[i + 1];
		const take = (): string | undefined => {
			i += 1;
			return value;
		};
		switch (flag) {
			case '--url': {
				const v = take();
				if (!v) return { ok: false, message: '--url needs a value' };
				options.url = v;
				break;
			}
			case '--tokens': {
				const v = take();
				if (!v) return { ok: false, message: '--tokens needs a file' };
				tokensFile = v;
				break;
			}
			case '--stations':
			case '--rate':
			case '--duration':
			case '--print-every':
			case '--noise-ppm': {
				const n = positive(flag, take());
				if (typeof n === 'string') return { ok: false, message: n };
				if (flag === '--stations') options.stations = Math.floor(n);
				else if (flag === '--rate') options.rate = n;
				else if (flag === '--duration') options.durationS = n;
				else if (flag === '--noise-ppm') options.frequencyNoisePpm = n;
				else printEveryS = n;
				break;
			}
			case '--batch': {
				const v = take() ?? '';
				const range = /^(\d+)(?:\.\.(\d+))?$/.exec(v);
				const lo = Number(range?.[1]);
				const hi = Number(range?.[2] ?? range?.[1]);
				if (!range || !(lo >= 1 && hi >= lo && hi <= 500)) return { ok: false, message: `--batch needs N or A..B within 1..500, got ${v}` };
				options.batchMin = lo;
				options.batchMax = hi;
				break;
			}
			case '--ref-every': {
				const v = take() ?? '';
				options.refEveryParts = null;
				options.refEveryMin = null;
				for (const part of v.split(',')) {
					const m = /^(\d+(?:\.\d+)?)(m|min)?$/.exec(part.trim());
					if (!m || !(Number(m[1]) > 0)) return { ok: false, message: `--ref-every needs N (parts) and/or Nm (minutes), got ${v}` };
					if (m[2]) options.refEveryMin = Number(m[1]);
					else options.refEveryParts = Math.round(Number(m[1]));
				}
				break;
			}
			case '--fault': {
				const v = take() ?? '';
				const fault = parseFault(v);
				if (!fault) return { ok: false, message: `--fault: cannot read ${v}` };
				faults.push(fault);
				break;
			}
			case '--seed': {
				const v = take();
				if (v === undefined) return { ok: false, message: '--seed needs a value' };
				options.seed = /^\d+$/.test(v) ? Number(v) : v;
				break;
			}
			case '--serial-start': {
				const v = take();
				if (v === 'auto') options.serialStart = Math.floor(nowMs / 1000) % 1_000_000_000;
				else {
					const n = Number(v);
					if (!(Number.isInteger(n) && n >= 0)) return { ok: false, message: `--serial-start needs an integer or auto, got ${String(v)}` };
					options.serialStart = n;
				}
				break;
			}
			case '--quiet':
				quiet = true;
				break;
			case '--help':
			case '-h':
				return { ok: false, message: USAGE };
			default:
				return { ok: false, message: `unknown argument ${String(flag)}\n${USAGE}` };
		}
	}
	options.faults = faults;
	return { ok: true, args: { options, tokensFile, printEveryS, quiet } };
}

function loadTokens(file: string | null): ReturnType<typeof parseTokens> {
	try {
		if (file !== null) return parseTokens(readFileSync(file, 'utf8'));
		const env = process.env.BIASLINE_SIM_TOKENS;
		if (!env) return { ok: false, message: 'no station tokens: pass --tokens FILE or set BIASLINE_SIM_TOKENS' };
		return parseTokens(env.trim().startsWith('[') ? env : readFileSync(env, 'utf8'));
	} catch (err) {
		return { ok: false, message: `cannot read tokens: ${err instanceof Error ? err.message : String(err)}` };
	}
}

function printTotals(stats: SimulationStats): void {
	for (const s of stats.stations) process.stdout.write(`${formatStationLine(s)}\n`);
	const t = stats.totals;
	process.stdout.write(`total    posted ${t.posted} ack ${t.acknowledged} ref ${t.references} retries ${t.retries} errors ${t.errors} rejected ${t.rejected} cal ${t.calibrations}\n`);
}

/** Runs the command line with process.argv and the environment; resolves with the exit code. */
export async function runCli(): Promise<number> {
	const parsed = parseArgs(process.argv.slice(2), Date.now());
	if (!parsed.ok) {
		process.stderr.write(`${parsed.message}\n`);
		return 2;
	}
	const { options, tokensFile, printEveryS, quiet } = parsed.args;
	const tokens = loadTokens(tokensFile);
	if (!tokens.ok) {
		process.stderr.write(`${tokens.message}\n`);
		return 2;
	}
	if (options.stations !== undefined && options.stations > tokens.tokens.length) {
		process.stderr.write(`--stations ${options.stations} but only ${tokens.tokens.length} token(s)\n`);
		return 2;
	}
	const sim = runSimulation({
		...options,
		tokens: tokens.tokens,
		log: (level, message, details) => {
			if (quiet && level === 'info') return;
			const extra = details && Object.keys(details).length > 0 ? ` ${JSON.stringify(details)}` : '';
			process.stderr.write(`${new Date().toISOString()} ${level.padEnd(5)} ${message}${extra}\n`);
		}
	});
	const ticker = setInterval(() => {
		process.stdout.write(`--- ${new Date().toISOString()}\n`);
		for (const s of sim.stats().stations) process.stdout.write(`${formatStationLine(s)}\n`);
	}, printEveryS * 1000);
	let stopping = false;
	const onSignal = (): void => {
		if (stopping) return;
		stopping = true;
		process.stderr.write('stopping...\n');
		void sim.stop();
	};
	process.on('SIGINT', onSignal);
	process.on('SIGTERM', onSignal);
	const final = await sim.done;
	clearInterval(ticker);
	process.off('SIGINT', onSignal);
	process.off('SIGTERM', onSignal);
	process.stdout.write('--- final\n');
	printTotals(final);
	return 0;
}

const invokedPath = process.argv[1];
if (invokedPath !== undefined && import.meta.url === pathToFileURL(invokedPath).href) {
	runCli().then(
		(code) => {
			process.exitCode = code;
		},
		(err: unknown) => {
			process.stderr.write(`${err instanceof Error ? (err.stack ?? err.message) : String(err)}\n`);
			process.exitCode = 1;
		}
	);
}
