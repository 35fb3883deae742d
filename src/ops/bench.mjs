// @ts-check
// `npm run bench`: the benchmarks, with a markdown report in <data dir>/bench/report.md.
// Speed targets are measured here, never in unit tests. Figures from a shared 2-core machine
// are noisy: the report carries the machine and its load beside each run.
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { dataDir, ensureDependencies, root, say } from './lib.mjs';

ensureDependencies();
const tsx = path.join(root, 'node_modules', '.bin', 'tsx');
const benches = [
	{ title: 'Measurement core: convert + fit + judge, matched sets', file: 'tests/bench/core.ts' },
	{ title: 'Control rules: one step of a chart with every rule enabled', file: 'tests/bench/spc-step.ts' }
];
const out = [
	'# Biasline benchmarks',
	'',
	`- when: ${new Date().toISOString()}`,
	`- machine: ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'unknown CPU'}, ${Math.round(os.totalmem() / 2 ** 30)} GiB, Node ${process.version}`,
	`- load average at start: ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}`,
	''
];
let failed = false;
for (const b of benches) {
	say(`${b.title} (${b.file})…`);
	const r = spawnSync(tsx, [b.file], { cwd: root, encoding: 'utf8' });
	process.stdout.write(r.stdout);
	if (r.status !== 0) {
		failed = true;
		process.stderr.write(r.stderr);
	}
	out.push(`## ${b.title}`, '', `Command: \`npx tsx ${b.file}\``, '', r.stdout.trim(), '');
}
const dir = path.join(dataDir(), 'bench');
fs.mkdirSync(dir, { recursive: true });
fs.writeFileSync(path.join(dir, 'report.md'), out.join('\n') + '\n');
say(`report: ${path.relative(root, path.join(dir, 'report.md'))}`);
process.exit(failed ? 1 : 0);
