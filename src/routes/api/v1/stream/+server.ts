// Server-sent events of the public contract (cookie session).
//
// Events (each with `id:` = the event log id, so a reconnect with Last-Event-ID resumes):
//   unit   {"serial","lot","station","bin","pass","testedAt","kind"}       one tested part
//   yield  {"station","lot","lotTested","lotPassed","lotYieldPct","stationYieldPct","stationWindow"}
//   alarm  {"id","rule","chart","kind","station","lot","status","suspect","description"}
// A comment line `: heartbeat` every 15 s keeps proxies from closing the stream.
// `?lot=` or `?station=` narrows the stream. GET for EventSource and curl; POST for clients
// that connect with POST. Written as a plain ReadableStream: the event ids must be the log's own.
import { error } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { eventsSince, type StoredEvent } from '$lib/server/events';
import { liveHub } from '$lib/server/live';
import { streamFilter } from '$lib/server/stream-filter';
import type { RequestHandler } from './$types';

const HEARTBEAT_MS = 15_000;

const handler: RequestHandler = async ({ locals, url, request }) => {
	requireApiArea(locals, 'floor');
	const filter = await streamFilter(url.searchParams);
	if (!filter.ok) error(filter.status, filter.message);
	const lastHeader = request.headers.get('last-event-id') ?? url.searchParams.get('lastEventId');
	const resumeFrom = lastHeader !== null && /^\d{1,18}$/.test(lastHeader) ? Number(lastHeader) : null;
	const hub = await liveHub();
	const accepts = (e: StoredEvent) =>
		(filter.stationId === undefined || e.stationId === filter.stationId) && (filter.lotId === undefined || e.lotId === filter.lotId);
	const encoder = new TextEncoder();
	let cleanup = () => {};

	const stream = new ReadableStream<Uint8Array>({
		async start(controller) {
			let open = true;
			let last = resumeFrom ?? hub.lastId;
			let replaying = true;
			const buffered: StoredEvent[] = [];
			const write = (text: string) => {
				if (!open) return;
				try {
					controller.enqueue(encoder.encode(text));
				} catch {
					cleanup();
				}
			};
			const send = (e: StoredEvent) => {
				if (e.id <= last) return;
				last = e.id;
				write(`id: ${e.id}\nevent: ${e.type}\ndata: ${JSON.stringify({ ...e.payload, at: e.at })}\n\n`);
			};
			const unsubscribe = hub.subscribe({
				accepts,
				push: (e) => (replaying ? buffered.push(e) : send(e)),
				close: () => cleanup()
			});
			const heartbeat = setInterval(() => write(': heartbeat\n\n'), HEARTBEAT_MS);
			cleanup = () => {
				if (!open) return;
				open = false;
				clearInterval(heartbeat);
				unsubscribe();
				try {
					controller.close();
				} catch {
					// already closed by the client
				}
			};
			request.signal.addEventListener('abort', () => cleanup());
			write('retry: 2000\n: connected\n\n');
			// Replay what the client missed, then hand over to the live feed without gaps or repeats.
			// The replay stops where the hub has delivered (ids past it may still have lower ids in
			// flight); the hub hands over from there, in order.
			if (resumeFrom !== null) {
				const upTo = hub.lastId;
				for (;;) {
					const page = await eventsSince(last, { stationId: filter.stationId, lotId: filter.lotId, limit: 2000, upTo });
					for (const e of page) send(e);
					if (page.length < 2000 || !open) break;
				}
				last = Math.max(last, upTo);
			}
			replaying = false;
			for (const e of buffered) send(e);
		},
		cancel() {
			cleanup();
		}
	});
	return new Response(stream, {
		headers: { 'content-type': 'text/event-stream; charset=utf-8', 'cache-control': 'no-cache', connection: 'keep-alive', 'x-accel-buffering': 'no' }
	});
};

export const GET = handler;
export const POST = handler;
