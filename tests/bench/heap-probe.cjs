// Preloaded into the benchmark's app process (NODE_OPTIONS=--require): appends the process's
// memory figures to BENCH_HEAP_FILE every BENCH_HEAP_MS, so the soak sees the heap without the
// app exposing anything. Benchmarks only.
const fs = require('node:fs');
const file = process.env.BENCH_HEAP_FILE;
if (file) {
	const every = Number(process.env.BENCH_HEAP_MS || 10000);
	const write = () => {
		const m = process.memoryUsage();
		fs.appendFileSync(file, JSON.stringify({ at: Date.now(), rss: m.rss, heapUsed: m.heapUsed, heapTotal: m.heapTotal, external: m.external }) + '\n');
	};
	setInterval(write, every).unref();
	write();
}
