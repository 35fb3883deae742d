// @ts-check
// The HTTP ceiling of the ingest benchmark: a bare node:http server (no framework, no database)
// that reads a station's results body, parses the JSON and answers every unit with a fixed bin,
// in an answer of the real one's shape and size. Run by tests/bench/ingest.ts as its own process
// (like the app); prints its port on the first line of stdout. Benchmarks only.
import http from 'node:http';

const MAX_BODY_BYTES = 1_048_576;
const fixed = {
	bin: 1,
	pass: true,
	capacitanceF: [2.86e-11, 2.47e-11, 2.21e-11, 2.02e-11, 1.75e-11, 1.57e-11, 1.19e-11, 9.62e-12],
	q: [251.2, 249.8, 250.4, 250.1, 249.6, 250.3, 250.9, 249.7],
	fit: { cj0F: 4.0e-11, vjV: 0.75, m: 0.5, cpF: 3.0e-13, rmsPct: 0.01 },
	failures: []
};
const server = http.createServer((req, res) => {
	const chunks = [];
	let size = 0;
	req.on('data', (c) => {
		size += c.length;
		if (size <= MAX_BODY_BYTES) chunks.push(c);
	});
	req.on('end', () => {
		let body;
		try {
			body = JSON.parse(Buffer.concat(chunks).toString('utf8'));
		} catch {
			res.writeHead(400, { 'content-type': 'application/problem+json' }).end('{"title":"not JSON"}');
			return;
		}
		const units = Array.isArray(body?.units) ? body.units : [];
		const answer = JSON.stringify({ results: units.map((/** @type {{ serial: string }} */ u) => ({ serial: u.serial, ...fixed })) });
		res.writeHead(201, { 'content-type': 'application/json', 'content-length': Buffer.byteLength(answer) }).end(answer);
	});
});
server.keepAliveTimeout = 30_000;
server.listen(0, '127.0.0.1', () => {
	const a = server.address();
	process.stdout.write(`${typeof a === 'object' && a ? a.port : 0}\n`);
});
process.on('SIGTERM', () => server.close(() => process.exit(0)));
