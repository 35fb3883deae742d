/**
 * A tiny node:http stand-in for the Biasline server, for the simulator's tests only: records every
 * request and lets each test script the answers.
 */
import { createServer, type IncomingHttpHeaders, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';

export interface RecordedRequest {
	method: string;
	path: string;
	headers: IncomingHttpHeaders;
	body: unknown;
}

export type MockHandler = (req: RecordedRequest, res: ServerResponse, raw: IncomingMessage) => void | Promise<void>;

export interface MockServer {
	url: string;
	requests: RecordedRequest[];
	close(): Promise<void>;
}

/** Starts a mock on 127.0.0.1 with an ephemeral port; assumes the handler answers or destroys the socket. */
export async function startMock(handler: MockHandler): Promise<MockServer> {
	const requests: RecordedRequest[] = [];
	const server = createServer((raw, res) => {
		const chunks: Buffer[] = [];
		raw.on('data', (c: Buffer) => chunks.push(c));
		raw.on('end', () => {
			const text = Buffer.concat(chunks).toString('utf8');
			let body: unknown = null;
			if (text.length > 0) {
				try {
					body = JSON.parse(text);
				} catch {
					body = text;
				}
			}
			const recorded: RecordedRequest = { method: raw.method ?? '', path: raw.url ?? '', headers: raw.headers, body };
			requests.push(recorded);
			Promise.resolve(handler(recorded, res, raw)).catch((err: unknown) => {
				res.statusCode = 500;
				res.end(String(err));
			});
		});
	});
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	const { port } = server.address() as AddressInfo;
	return {
		url: `http://127.0.0.1:${port}`,
		requests,
		close: () =>
			new Promise<void>((resolve) => {
				server.closeAllConnections();
				server.close(() => resolve());
			})
	};
}

/** Answers JSON. */
export function sendJson(res: ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}): void {
	res.writeHead(status, { 'Content-Type': 'application/json', ...headers });
	res.end(JSON.stringify(body));
}

/** Answers an RFC 9457 problem document. */
export function sendProblem(res: ServerResponse, status: number, type: string, title: string, extra: Record<string, unknown> = {}, headers: Record<string, string> = {}): void {
	res.writeHead(status, { 'Content-Type': 'application/problem+json', ...headers });
	res.end(JSON.stringify({ type, title, status, ...extra }));
}
