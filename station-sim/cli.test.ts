import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { parseArgs } from './cli.ts';
import { sendJson, sendProblem, startMock, type MockServer } from './mock-server';
import { formatStationLine, parseFault, parseTokens } from './simulation';

describe('parseFault: kind[@station-or-lot,...][=value]', () => {
	it.each([
		['drift', { kind: 'drift', targets: [] }],
		['drift@T-02=40', { kind: 'drift', targets: ['T-02'], value: 40 }],
		['badlot@L-0417', { kind: 'badlot', targets: ['L-0417'] }],
		['noisy@T-01,T-04=10', { kind: 'noisy', targets: ['T-01', 'T-04'], value: 10 }],
		['malformed=0.05', { kind: 'malformed', targets: [], value: 0.05 }],
		['malformed=0', { kind: 'malformed', targets: [], value: 0 }],
		['malformed=1', { kind: 'malformed', targets: [], value: 1 }],
		['offline@T-06=60..120', { kind: 'offline', targets: ['T-06'], window: { fromS: 60, toS: 120 } }]
	])('%s', (text, expected) => {
		expect(parseFault(text)).toEqual(expected);
	});

	it.each(['', 'meltdown', 'drift=abc', 'drift=Infinity', 'malformed=1.5', 'malformed=-0.1', 'offline=120..60', 'offline=60', 'offline=60..60', 'DRIFT'])('refuses %j', (text) => {
		expect(parseFault(text)).toBeNull();
	});
});

describe('parseTokens', () => {
	it('reads [{ name, token, lot, product }]', () => {
		const r = parseTokens('[{"name":"T-01","token":"abc","lot":"L-1","product":"KV-1405"},{"name":"T-02","token":"def","lot":"L-2"}]');
		expect(r).toEqual({
			ok: true,
			tokens: [
				{ name: 'T-01', token: 'abc', lot: 'L-1', product: 'KV-1405' },
				{ name: 'T-02', token: 'def', lot: 'L-2', product: null }
			]
		});
	});

	it.each([
		['not json', 'not JSON'],
		['{}', 'array'],
		['[1]', 'not an object'],
		['[{"token":"a","lot":"L"}]', 'name'],
		['[{"name":"T","lot":"L"}]', 'token'],
		['[{"name":"T","token":"a"}]', 'lot'],
		['[{"name":"T","token":"a","lot":"L","product":5}]', 'product'],
		['[{"name":"T","token":"a","lot":"L"},{"name":"T","token":"b","lot":"L"}]', 'twice']
	])('refuses %s', (text, why) => {
		const r = parseTokens(text);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.message).toContain(why);
	});

	it('an empty list is valid (nothing to run)', () => {
		expect(parseTokens('[]')).toEqual({ ok: true, tokens: [] });
	});
});

describe('parseArgs', () => {
	it('reads every flag', () => {
		const r = parseArgs(
			['--url', 'http://x:1', '--tokens', 't.json', '--stations', '6', '--rate', '5', '--batch', '2..8', '--ref-every', '50,10m', '--fault', 'drift@T-01=30', '--fault', 'offline=10..20', '--duration', '60', '--seed', '7', '--serial-start', '1000', '--noise-ppm', '3', '--print-every', '2', '--quiet'],
			0
		);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.args).toEqual({
			options: {
				url: 'http://x:1',
				stations: 6,
				rate: 5,
				batchMin: 2,
				batchMax: 8,
				refEveryParts: 50,
				refEveryMin: 10,
				faults: [
					{ kind: 'drift', targets: ['T-01'], value: 30 },
					{ kind: 'offline', targets: [], window: { fromS: 10, toS: 20 } }
				],
				durationS: 60,
				seed: 7,
				serialStart: 1000,
				frequencyNoisePpm: 3
			},
			tokensFile: 't.json',
			printEveryS: 2,
			quiet: true
		});
	});

	it('a single batch size and a string seed', () => {
		const r = parseArgs(['--batch', '5', '--seed', 'demo'], 0);
		expect(r.ok && r.args.options.batchMin === 5 && r.args.options.batchMax === 5 && r.args.options.seed === 'demo').toBe(true);
	});

	it('--serial-start auto takes the clock (seconds)', () => {
		const r = parseArgs(['--serial-start', 'auto'], 1_700_000_123_456);
		expect(r.ok && r.args.options.serialStart).toBe(700_000_123);
	});

	it.each([
		[['--rate', '0']],
		[['--rate', '-1']],
		[['--rate', 'NaN']],
		[['--rate', 'Infinity']],
		[['--rate']],
		[['--batch', '0']],
		[['--batch', '5..2']],
		[['--batch', '1..501']],
		[['--ref-every', 'often']],
		[['--fault', 'meltdown']],
		[['--serial-start', '1.5']],
		[['--bogus']]
	])('refuses %j', (argv) => {
		expect(parseArgs(argv, 0).ok).toBe(false);
	});
});

describe('formatStationLine', () => {
	it('prints counters and bins in numeric order', () => {
		const line = formatStationLine({
			name: 'T-01',
			lot: 'L-1',
			posted: 12,
			acknowledged: 10,
			references: 1,
			replayed: 0,
			bins: { '10': 1, '2': 3, '1': 6 },
			retries: 2,
			errors: 1,
			rejected: 1,
			malformedSent: 0,
			calibrations: 1,
			offline: true,
			lastError: null
		});
		expect(line).toContain('posted 12 ack 10');
		expect(line).toContain('bins [1:6 2:3 10:1]');
		expect(line).toContain('retries 2 errors 1');
		expect(line).toContain('OFFLINE');
	});
});

describe('the command line, run as a process against a mock server', () => {
	const dir = mkdtempSync(join(tmpdir(), 'sim-cli-'));
	const root = fileURLToPath(new URL('..', import.meta.url));
	let server: MockServer | null = null;
	afterEach(async () => {
		await server?.close();
		server = null;
	});
	afterAll(() => rmSync(dir, { recursive: true, force: true }));

	async function mockStations(): Promise<MockServer> {
		const s = await startMock((req, res) => {
			if (req.path === '/api/v1/station') sendJson(res, 200, { station: {}, fixture: null, calibration: null, plan: null });
			else if (req.path === '/api/v1/calibrations') sendJson(res, 201, { inductanceH: 1e-4, strayF: 3e-12, residualPpm: 1, validUntil: new Date(Date.now() + 3600_000).toISOString() });
			else if (req.path === '/api/v1/results') {
				const units = (req.body as { units: { serial: string }[] }).units;
				sendJson(res, 201, { results: units.map((u) => ({ serial: u.serial, bin: 1, pass: true })) });
			} else sendProblem(res, 404, 'x', 'Not found');
		});
		server = s;
		return s;
	}

	function run(args: string[], env: Record<string, string> = {}, onSpawn?: (kill: () => void) => void): Promise<{ code: number | null; stdout: string; stderr: string }> {
		return new Promise((resolve) => {
			const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'station-sim', 'cli.ts'), ...args], { cwd: root, env: { ...process.env, ...env } });
			let stdout = '';
			let stderr = '';
			child.stdout.on('data', (d: Buffer) => {
				stdout += d.toString();
			});
			child.stderr.on('data', (d: Buffer) => {
				stderr += d.toString();
			});
			child.on('close', (code) => resolve({ code, stdout, stderr }));
			onSpawn?.(() => child.kill('SIGTERM'));
		});
	}

	it('--duration: runs, prints a final line per station and exits 0', async () => {
		const s = await mockStations();
		const tokens = join(dir, 'tokens.json');
		writeFileSync(tokens, JSON.stringify([{ name: 'T-01', token: 'a', lot: 'L-1', product: 'KV-1405' }, { name: 'T-02', token: 'b', lot: 'L-2', product: 'KV-2210H' }]));
		const r = await run(['--url', s.url, '--tokens', tokens, '--rate', '50', '--duration', '1.5', '--print-every', '0.5', '--quiet']);
		expect(r.code).toBe(0);
		expect(r.stdout).toContain('--- final');
		expect(r.stdout).toMatch(/T-01\s+L-1\s+posted \d+/);
		expect(r.stdout).toMatch(/T-02\s+L-2\s+posted \d+/);
		expect(s.requests.filter((q) => q.path === '/api/v1/results').length).toBeGreaterThan(0);
	}, 20_000);

	it('SIGTERM stops it cleanly (tokens from BIASLINE_SIM_TOKENS)', async () => {
		const s = await mockStations();
		const r = await run(['--url', s.url, '--rate', '20', '--quiet'], { BIASLINE_SIM_TOKENS: JSON.stringify([{ name: 'T-09', token: 'z', lot: 'L-9' }]) }, (kill) => {
			const wait = setInterval(() => {
				if (s.requests.some((q) => q.path === '/api/v1/results')) {
					clearInterval(wait);
					kill();
				}
			}, 50);
		});
		expect(r.code).toBe(0);
		expect(r.stderr).toContain('stopping');
		expect(r.stdout).toMatch(/T-09\s+L-9\s+posted \d+/);
	}, 20_000);

	it('exits 2 with a message when there are no tokens', async () => {
		const r = await run(['--url', 'http://127.0.0.1:9'], { BIASLINE_SIM_TOKENS: '' });
		expect(r.code).toBe(2);
		expect(r.stderr).toContain('no station tokens');
	}, 20_000);
});
